import type { CalibrationState } from '@shared/instruments/instrument.schema';
import type { ReadingWarning } from '@shared/readings/reading.schema';
import type { SheetCheck } from '@shared/review/review-sheet.schema';

const relativeFormat = new Intl.RelativeTimeFormat(undefined, { numeric: 'auto' });

export { clockTime, exactTime } from '@/lib/dates';

const steps: [Intl.RelativeTimeFormatUnit, number][] = [
  ['year', 365 * 24 * 3600],
  ['month', 30 * 24 * 3600],
  ['week', 7 * 24 * 3600],
  ['day', 24 * 3600],
  ['hour', 3600],
  ['minute', 60],
];

/** "3 hours ago", "in 25 minutes", "just now": the largest whole unit. */
export function relativeTime(iso: string, now: Date = new Date()): string {
  const seconds = (new Date(iso).getTime() - now.getTime()) / 1000;
  if (!Number.isFinite(seconds)) return iso;
  for (const [unit, size] of steps) {
    if (Math.abs(seconds) >= size) return relativeFormat.format(Math.trunc(seconds / size), unit);
  }
  return seconds < 0 ? 'just now' : 'in under a minute';
}

/** Where one reading or clearance stands for this story: never checked, checked, flagged, or changed after its check. */
export type EvidenceState = 'unchecked' | 'checked' | 'flagged' | 'changed';

/** The state of a subject from its latest check. */
export function evidenceState(check: SheetCheck | null): EvidenceState {
  if (!check) return 'unchecked';
  if (!check.current) return 'changed';
  return check.state;
}

/** Words for a state; a change names what it undid. */
export function evidenceStateWords(state: EvidenceState, check: SheetCheck | null): string {
  if (state === 'changed') return `changed since ${check?.state ?? 'checked'}`;
  return state;
}

/** The instrument's calibration on the reading's day, read back from the warnings the reading carries. */
export function calibrationFromWarnings(warnings: readonly ReadingWarning[]): CalibrationState {
  if (warnings.some((w) => w.code === 'calibration-overdue')) return 'overdue';
  if (warnings.some((w) => w.code === 'no-calibration-record')) return 'no-record';
  return 'in-date';
}

/** Seconds of footage shown before a moment, so the moderator sees the instrument being set. */
export const LEAD_IN_S = 3;

/** Where the clip starts for a moment: a few seconds before it, never before the start. */
export function leadInStart(atMs: number): number {
  return Math.max(0, atMs / 1000 - LEAD_IN_S);
}
