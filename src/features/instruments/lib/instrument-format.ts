import { lengthTextIn } from '@shared/measure/length-text';
import { displayDecimals, formatNumber, formatUncertainty, symbolFor } from '@shared/measure/format';
import { resolutionStandardUncertainty } from '@shared/measure/uncertainty';
import { picometresToMicrometres, type LengthUnit } from '@shared/measure/units';

/** A stored length with its unit: "0.0001 in", "1 tenth". */
export function withUnit(text: string, unit: LengthUnit): string {
  return `${text} ${symbolFor(unit, text)}`;
}

/** Today on the builder's own calendar, YYYY-MM-DD (the default day of a zero check). */
export function todayLocal(now = new Date()): string {
  const pad = (n: number) => String(n).padStart(2, '0');
  return `${now.getFullYear()}-${pad(now.getMonth() + 1)}-${pad(now.getDate())}`;
}

/** A stored signed decimal with an explicit sign, so an offset reads as a correction: "+0.0001 in". */
export function signedWithUnit(text: string, unit: LengthUnit): string {
  const trimmed = text.trim();
  const negative = trimmed.startsWith('-') || trimmed.startsWith('−');
  const digits = trimmed.replace(/^[-−+]/, '');
  const zero = !/[1-9]/.test(digits);
  const sign = zero ? '' : negative ? '−' : '+';
  return `${sign}${digits} ${symbolFor(unit, digits)}`;
}

export type LiveOffset = { ok: true; text: string } | { ok: false };

/**
 * shown − standard while the builder types, exact in picometres and shown to the finer of the
 * two places typed (so 1.0002 on 1.0000 reads +0.0002, not +0.0002000).
 */
export function liveOffset(standardText: string, shownText: string, unit: LengthUnit): LiveOffset {
  const standard = lengthTextIn(standardText, unit);
  const shown = lengthTextIn(shownText, unit);
  if (!standard.ok || !shown.ok) return { ok: false };
  const diff = shown.length.pm - standard.length.pm;
  const decimals = Math.max(displayDecimals(standard.length.lastPlacePm, unit), displayDecimals(shown.length.lastPlacePm, unit));
  const number = formatNumber(diff, unit, decimals);
  return { ok: true, text: signedWithUnit(number, unit) };
}

/**
 * The standard uncertainty the engine takes from the resolution alone, u = δx/(2√3)
 * (GUM F.2.2.1), to two significant digits; null while the resolution is not a length.
 */
export function resolutionOnlyUncertainty(resolutionText: string, unit: LengthUnit): string | null {
  const parsed = lengthTextIn(resolutionText, unit);
  if (!parsed.ok || parsed.length.pm <= 0n) return null;
  return formatUncertainty(resolutionStandardUncertainty(picometresToMicrometres(parsed.length.pm)), unit);
}
