import { useQuery } from '@tanstack/react-query';
import { useSyncExternalStore } from 'react';
import { systemOf, unitSystems, type UnitSystem } from '@shared/measure/format';
import type { LengthUnit } from '@shared/measure/units';
import { authQueries } from '@/features/auth/api/auth-queries';
import { followQueries } from '@/features/follows/api/follow-queries';
import { useUpdatePreferences } from '@/features/follows/api/follow-mutations';

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
  /** The reader's own choice, or null while figures follow the builder's units. */
  chosen: UnitSystem | null;
  setSystem: (system: UnitSystem) => void;
  /** Where the choice is kept, for the switch's hint. */
  remembered: 'account' | 'browser';
  saveError: unknown;
}

/**
 * The reader's measuring system: kept in this browser when signed out, in the account's
 * preferences when signed in. Until the reader picks one, figures follow the builder's unit
 * (`entryUnit`), so an inch builder's story reads in inches.
 */
export function useUnitSystem(entryUnit: LengthUnit | null): UnitChoice {
  const me = useQuery(authQueries.me());
  const signedIn = Boolean(me.data);
  const preferences = useQuery({ ...followQueries.preferences(), enabled: signedIn });
  const update = useUpdatePreferences();
  const local = useSyncExternalStore(subscribe, readLocal, () => null);
  const chosen = signedIn ? (preferences.data?.units ?? local) : local;
  return {
    system: chosen ?? (entryUnit ? systemOf(entryUnit) : 'imperial'),
    chosen,
    remembered: signedIn ? 'account' : 'browser',
    saveError: update.error,
    setSystem: (system) => {
      // The browser copy also answers at once while the account copy is saved.
      writeLocal(system);
      if (signedIn) update.mutate({ units: system });
    },
  };
}
