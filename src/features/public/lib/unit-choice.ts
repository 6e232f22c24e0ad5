import { systemOf, type UnitSystem } from '@shared/measure/format';
import type { LengthUnit } from '@shared/measure/units';

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
  /** The unit the builder entered the page's figures in. */
  entryUnit: LengthUnit | null;
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
  return { system: inputs.entryUnit ? systemOf(inputs.entryUnit) : 'imperial', chosen: null, source: 'builder' };
}
