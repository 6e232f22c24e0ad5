import type { SpecSourceKind } from '@shared/measure/spec.schema';
import type { BandPm } from '@shared/measure/spec';
import { lengthTextIn } from '@shared/measure/length-text';
import { displayDecimals } from '@shared/measure/format';
import { withUnit } from '@shared/measure/format-quantity';
import type { Fraction } from '@shared/measure/exact';
import type { AnyUnit } from '@shared/measure/quantities';
import { figureTextIn } from '@shared/measure/quantity-text';
import { isLengthUnit, type LengthUnit } from '@shared/measure/units';

/** What people see for each kind of source. */
export const specSourceKindNames: Record<SpecSourceKind, string> = {
  manual: 'Manufacturer’s manual',
  standard: 'Standard',
  'common-practice': 'Common practice (no published source)',
};

/** The figures of one version as stored: decimal text in `unit`, null where not set. */
export interface VersionFigures {
  unit: AnyUnit;
  min: string | null;
  max: string | null;
  preferredMin: string | null;
  preferredMax: string | null;
  reject: string | null;
}

function pm(text: string | null, unit: LengthUnit): bigint | undefined {
  if (text === null || text.trim() === '') return undefined;
  const parsed = lengthTextIn(text, unit);
  return parsed.ok ? parsed.length.pm : undefined;
}

function places(text: string | null, unit: LengthUnit): number {
  if (text === null || text.trim() === '') return 0;
  const parsed = lengthTextIn(text, unit);
  return parsed.ok ? displayDecimals(parsed.length.lastPlacePm, unit) : 0;
}

/** A version whose figures are lengths: the one kind the picometre band picture draws. */
export type LengthVersionFigures = VersionFigures & { unit: LengthUnit };

/** Whether the version's figures are lengths. */
export function isLengthVersion<T extends VersionFigures>(v: T): v is T & { unit: LengthUnit } {
  return isLengthUnit(v.unit);
}

/**
 * A length version's limits in picometres for a band picture, read exactly from the stored text;
 * the preferred band falls back to the band's own limit on an open side, as the engine judges it.
 */
export function bandOf(v: LengthVersionFigures): { band: BandPm; preferred: BandPm | null; rejectPm: bigint | null; decimals: number } {
  const min = pm(v.min, v.unit);
  const max = pm(v.max, v.unit);
  const pMin = pm(v.preferredMin, v.unit);
  const pMax = pm(v.preferredMax, v.unit);
  const hasPreferred = pMin !== undefined || pMax !== undefined;
  const prefMin = pMin ?? min;
  const prefMax = pMax ?? max;
  return {
    band: { ...(min !== undefined && { minPm: min }), ...(max !== undefined && { maxPm: max }) },
    preferred: hasPreferred ? { ...(prefMin !== undefined && { minPm: prefMin }), ...(prefMax !== undefined && { maxPm: prefMax }) } : null,
    rejectPm: pm(v.reject, v.unit) ?? null,
    decimals: Math.max(...[v.min, v.max, v.preferredMin, v.preferredMax, v.reject].map((t) => places(t, v.unit))),
  };
}

function range(lo: string | null, hi: string | null): string {
  if (lo !== null && hi !== null) return `${lo}–${hi}`;
  if (lo !== null) return `at least ${lo}`;
  if (hi !== null) return `at most ${hi}`;
  return '';
}

/** A stored figure's exact value in `unit` (any quantity), or undefined when blank or unreadable. */
function exact(text: string | null, unit: AnyUnit): Fraction | undefined {
  if (text === null || text.trim() === '') return undefined;
  const parsed = figureTextIn(text, unit);
  return parsed.ok ? parsed.figure.value : undefined;
}

/** Which side of the band the reject limit is on (at or above max: above), as the engine reads it. */
export function rejectSide(v: VersionFigures): 'above' | 'below' | null {
  const reject = exact(v.reject, v.unit);
  if (reject === undefined) return null;
  const max = exact(v.max, v.unit);
  const min = exact(v.min, v.unit);
  if (max !== undefined && reject.gte(max)) return 'above';
  if (min !== undefined && reject.lte(min)) return 'below';
  return null;
}

/**
 * "0.0020–0.0040 in, preferred 0.0025–0.0035, reject above 0.0050"; "35–40 lbf·ft"; "10.2–10.8"
 * for a ratio (no unit after it).
 */
export function bandSummary(v: VersionFigures): string {
  const parts = [withUnit(range(v.min, v.max), v.unit)];
  if (v.preferredMin !== null || v.preferredMax !== null) parts.push(`preferred ${range(v.preferredMin ?? v.min, v.preferredMax ?? v.max)}`);
  const side = rejectSide(v);
  if (side && v.reject !== null) parts.push(`reject ${side} ${v.reject}`);
  return parts.join(', ');
}

const INVENTED = /invented for (the )?(benchproof )?demo/i;

/** True for the starter specs the demo ships with, whose figures are made up and say so. */
export function isInventedForDemo(v: { source: { text: string }; note: string }): boolean {
  return INVENTED.test(v.source.text) || INVENTED.test(v.note);
}

/** A timestamp as the day it fell on, YYYY-MM-DD (UTC, as the server records it). */
export function dayOf(iso: string): string {
  return iso.slice(0, 10);
}
