import { systemOf, type UnitSystem } from '@shared/measure/format';
import { unitTable, type AnyUnit } from '@shared/measure/quantities';
import { isLengthUnit, type LengthUnit } from '@shared/measure/units';

/** Where the system a page shows came from, for the units switch's hint. */
export type UnitSource = 'browser' | 'account' | 'account-default' | 'builder';

/** What is known about the reader's units, most particular first. */
export interface UnitInputs {
  /** Picked with the units switch in this browser. */
  device: UnitSystem | null;
  /** Picked with the units switch while signed in (kept on the account, so other devices follow). */
  account: UnitSystem | null;
  /** The account's default units (chosen on the account page). */
  accountDefault: UnitSystem | null;
  /** The unit the builder entered the page's figures in (a length's, or any unit of one system). */
  entryUnit: AnyUnit | null;
}

/**
 * The unit that tells a page's system when the reader has chosen none: the first length among
 * `units` (as pages always did), else the first unit of one system (lbf·ft is imperial, N·m
 * metric); null when every unit is of both (°, s, a ratio) or there is none.
 */
export function entryUnitOf(units: readonly (AnyUnit | null | undefined)[]): LengthUnit | AnyUnit | null {
  const known = units.filter((u): u is AnyUnit => u !== null && u !== undefined);
  return known.find((u) => isLengthUnit(u)) ?? known.find((u) => unitTable[u].system !== 'any') ?? null;
}

/**
 * The system figures are shown in: this device's pick first, then the account's pick, then the
 * account's default units, then the builder's own unit, then imperial. `chosen` is the reader's
 * (or their account's) choice, null while figures follow the builder's units.
 */
export function chooseUnitSystem(inputs: UnitInputs): { system: UnitSystem; chosen: UnitSystem | null; source: UnitSource } {
  // The switch saves a signed-in pick in both places; say "your account" when they agree.
  if (inputs.device) return { system: inputs.device, chosen: inputs.device, source: inputs.account === inputs.device ? 'account' : 'browser' };
  if (inputs.account) return { system: inputs.account, chosen: inputs.account, source: 'account' };
  if (inputs.accountDefault) return { system: inputs.accountDefault, chosen: inputs.accountDefault, source: 'account-default' };
  return { system: builderSystem(inputs.entryUnit) ?? 'imperial', chosen: null, source: 'builder' };
}

/** The system of the builder's unit, or null for a unit both systems use (°, s, a ratio). */
function builderSystem(unit: AnyUnit | null): UnitSystem | null {
  if (!unit) return null;
  if (isLengthUnit(unit)) return systemOf(unit);
  const system = unitTable[unit].system;
  return system === 'any' ? null : system;
}
