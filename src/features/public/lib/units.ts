import { useQuery } from '@tanstack/react-query';
import { useSyncExternalStore } from 'react';
import { unitSystems, type UnitSystem } from '@shared/measure/format';
import type { AnyUnit } from '@shared/measure/quantities';
import { authQueries } from '@/features/auth/api/auth-queries';
import { defaultUnitsOf } from '@/features/auth/lib/default-units';
import { followQueries } from '@/features/follows/api/follow-queries';
import { useUpdatePreferences } from '@/features/follows/api/follow-mutations';
import { chooseUnitSystem, type UnitSource } from './unit-choice';

const STORAGE_KEY = 'benchproof.units';
const listeners = new Set<() => void>();

function readLocal(): UnitSystem | null {
  try {
    const value = window.localStorage.getItem(STORAGE_KEY);
    return (unitSystems as readonly string[]).includes(value ?? '') ? (value as UnitSystem) : null;
  } catch {
    // Storage refused (private mode, a policy): the choice lasts for this page only.
    return memory;
  }
}

let memory: UnitSystem | null = null;

function writeLocal(system: UnitSystem) {
  memory = system;
  try {
    window.localStorage.setItem(STORAGE_KEY, system);
  } catch {
    // See readLocal.
  }
  for (const listener of listeners) listener();
}

function subscribe(listener: () => void) {
  listeners.add(listener);
  const onStorage = (event: StorageEvent) => event.key === STORAGE_KEY && listener();
  window.addEventListener('storage', onStorage);
  return () => {
    listeners.delete(listener);
    window.removeEventListener('storage', onStorage);
  };
}

export interface UnitChoice {
  /** The system figures are shown in now. */
  system: UnitSystem;
  /** The reader's own choice (or their account's), or null while figures follow the builder's units. */
  chosen: UnitSystem | null;
  setSystem: (system: UnitSystem) => void;
  /** Where the system shown came from, for the switch's hint. */
  source: UnitSource;
  saveError: unknown;
}

/**
 * The reader's measuring system. A pick with the switch is kept in this browser, and in the
 * account's preferences when signed in so other devices follow. This device's pick comes first,
 * then the account's pick, then the account's default units; until there is any, figures follow
 * the builder's unit (`entryUnit`), so an inch builder's story reads in inches.
 */
export function useUnitSystem(entryUnit: AnyUnit | null): UnitChoice {
  const me = useQuery(authQueries.me());
  const signedIn = Boolean(me.data);
  const preferences = useQuery({ ...followQueries.preferences(), enabled: signedIn });
  const update = useUpdatePreferences();
  const local = useSyncExternalStore(subscribe, readLocal, () => null);
  const { system, chosen, source } = chooseUnitSystem({
    device: local,
    account: signedIn ? (preferences.data?.units ?? null) : null,
    accountDefault: defaultUnitsOf(me.data).system,
    entryUnit,
  });
  return {
    system,
    chosen,
    source,
    saveError: update.error,
    setSystem: (picked) => {
      // The browser copy also answers at once while the account copy is saved.
      writeLocal(picked);
      if (signedIn) update.mutate({ units: picked });
    },
  };
}
