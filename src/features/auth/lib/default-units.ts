import type { DefaultUnitSystem, TemperatureScale } from '@shared/measure/quantities';
import type { User } from '@shared/users/user.schema';

// Read on public pages too (the reader's units), so this module imports types only from shared/:
// no zod in the reader's first load.

/** The signed-in account's default units; null where not chosen (or signed out). */
export interface DefaultUnits {
  system: DefaultUnitSystem | null;
  temperatureScale: TemperatureScale | null;
}

/** No account defaults: each screen's own fallback applies. */
export const noDefaultUnits: DefaultUnits = { system: null, temperatureScale: null };

/** The defaults of an account as `/api/me` answers it (null when signed out). */
export function defaultUnitsOf(user: Pick<User, 'unitSystem' | 'temperatureScale'> | null | undefined): DefaultUnits {
  if (!user) return noDefaultUnits;
  // `?? null`: an answer cached before the fields existed lacks them.
  return { system: user.unitSystem ?? null, temperatureScale: user.temperatureScale ?? null };
}
