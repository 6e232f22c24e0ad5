import { lengthTextIn } from '@shared/measure/length-text';
import { displayDecimals, formatNumber, formatUncertainty } from '@shared/measure/format';
import { formatUncertaintyIn, withUnit as figureWithUnit } from '@shared/measure/format-quantity';
import { fractionToFixed } from '@shared/measure/exact';
import type { AnyUnit } from '@shared/measure/quantities';
import { figureTextIn } from '@shared/measure/quantity-text';
import { resolutionStandardUncertainty } from '@shared/measure/uncertainty';
import { isLengthUnit, picometresToMicrometres } from '@shared/measure/units';

/** A stored figure with its unit: "0.0001 in", "1 tenth", "1 lbf·ft", "0.5°", "10.2" (a ratio). */
export function withUnit(text: string, unit: AnyUnit): string {
  return figureWithUnit(text, unit);
}

/** Today on the builder's own calendar, YYYY-MM-DD (the default day of a zero check). */
export function todayLocal(now = new Date()): string {
  const pad = (n: number) => String(n).padStart(2, '0');
  return `${now.getFullYear()}-${pad(now.getMonth() + 1)}-${pad(now.getDate())}`;
}

/** A stored signed decimal with an explicit sign, so an offset reads as a correction: "+0.0001 in", "−0.5 psi". */
export function signedWithUnit(text: string, unit: AnyUnit): string {
  const trimmed = text.trim();
  const negative = trimmed.startsWith('-') || trimmed.startsWith('−');
  const digits = trimmed.replace(/^[-−+]/, '');
  const zero = !/[1-9]/.test(digits);
  const sign = zero ? '' : negative ? '−' : '+';
  return `${sign}${withUnit(digits, unit)}`;
}

export type LiveOffset = { ok: true; text: string } | { ok: false };

/**
 * shown − standard while the builder types, exact, and shown to the finer of the two places
 * typed (so 1.0002 on 1.0000 reads +0.0002, not +0.0002000; 0.4 psi on 0 reads +0.4 psi).
 * Lengths go through picometres as they always have; other quantities through exact fractions.
 */
export function liveOffset(standardText: string, shownText: string, unit: AnyUnit): LiveOffset {
  if (isLengthUnit(unit)) {
    const standard = lengthTextIn(standardText, unit);
    const shown = lengthTextIn(shownText, unit);
    if (!standard.ok || !shown.ok) return { ok: false };
    const diff = shown.length.pm - standard.length.pm;
    const decimals = Math.max(displayDecimals(standard.length.lastPlacePm, unit), displayDecimals(shown.length.lastPlacePm, unit));
    const number = formatNumber(diff, unit, decimals);
    return { ok: true, text: signedWithUnit(number, unit) };
  }
  const standard = figureTextIn(standardText, unit);
  const shown = figureTextIn(shownText, unit);
  if (!standard.ok || !shown.ok) return { ok: false };
  const diff = shown.figure.value.sub(standard.figure.value);
  const decimals = Math.max(standard.figure.decimal.scale, shown.figure.decimal.scale);
  return { ok: true, text: signedWithUnit(fractionToFixed(diff, decimals), unit) };
}

/**
 * The standard uncertainty the engine takes from the resolution alone, u = δx/(2√3)
 * (GUM F.2.2.1), to two significant digits; null while the resolution is not a figure in `unit`.
 */
export function resolutionOnlyUncertainty(resolutionText: string, unit: AnyUnit): string | null {
  if (isLengthUnit(unit)) {
    const parsed = lengthTextIn(resolutionText, unit);
    if (!parsed.ok || parsed.length.pm <= 0n) return null;
    return formatUncertainty(resolutionStandardUncertainty(picometresToMicrometres(parsed.length.pm)), unit);
  }
  const parsed = figureTextIn(resolutionText, unit);
  if (!parsed.ok || parsed.figure.value.s < 0n || parsed.figure.value.n === 0n) return null;
  return formatUncertaintyIn(resolutionStandardUncertainty(parsed.figure.value.valueOf()), unit);
}

/**
 * A figure box's problem as typed, in the record's unit (the check the server makes with
 * `stepIn`): a resolution must be above zero, an uncertainty not below it.
 */
export function figureProblem(text: string, unit: AnyUnit, positive: boolean): string | undefined {
  if (text.trim() === '') return undefined;
  const parsed = figureTextIn(text, unit);
  if (!parsed.ok) return parsed.message;
  const value = parsed.figure.value;
  const sign = value.n === 0n ? 0 : Number(value.s);
  if (positive && sign <= 0) return 'resolution must be greater than 0';
  if (!positive && sign < 0) return 'uncertainty cannot be negative';
  return undefined;
}
