import type { CalibrationState, Instrument } from '@shared/instruments/instrument.schema';
import type { ReadingWarning, ReviewState } from '@shared/readings/reading.schema';
import { Badge } from '@/components/ui/badge';
import { cn } from '@/lib/cn';
import { withReadingUnit } from '../lib/reading-text';

const reviewWords: Record<ReviewState, string> = {
  unchecked: 'unchecked',
  checked: 'checked',
  flagged: 'flagged',
};

/** Where a reading stands in review, as a shape and a word (open ring, tick, flag). */
export function ReviewStateBadge({ state }: { state: ReviewState }) {
  return (
    <Badge
      data-review-state={state}
      className={cn(state === 'flagged' && 'border-danger/50 text-danger', state === 'checked' && 'border-ink/40')}
    >
      <svg viewBox="0 0 16 16" className="size-3.5 shrink-0" aria-hidden="true">
        {state === 'unchecked' && <circle cx="8" cy="8" r="5" fill="none" stroke="currentColor" strokeWidth="1.4" />}
        {state === 'checked' && (
          <path d="M3 8.5l3.2 3L13 4.5" fill="none" stroke="currentColor" strokeWidth="1.8" strokeLinecap="round" strokeLinejoin="round" />
        )}
        {state === 'flagged' && (
          <path d="M4 14.5V2M4 2.5h8l-2 3 2 3H4" fill="currentColor" fillOpacity="0.25" stroke="currentColor" strokeWidth="1.4" strokeLinejoin="round" />
        )}
      </svg>
      {reviewWords[state]}
    </Badge>
  );
}

/** A small warning triangle that goes before warning text. */
export function WarningIcon({ className }: { className?: string }) {
  return (
    <svg viewBox="0 0 16 16" className={cn('mt-0.5 size-3.5 shrink-0', className)} aria-hidden="true">
      <path d="M8 1.5 15 14.5H1z" fill="none" stroke="currentColor" strokeWidth="1.5" strokeLinejoin="round" />
      <path d="M8 6v4M8 11.6v.8" stroke="currentColor" strokeWidth="1.5" strokeLinecap="round" />
    </svg>
  );
}

const warningWords: Record<ReadingWarning['code'], string> = {
  'calibration-overdue': 'calibration overdue',
  'no-calibration-record': 'no calibration record',
  'no-zero-check': 'no zero check that day',
  'resolution-converted': 'resolution converted',
};

/**
 * The warnings a reading carries, each as an icon and its words: short in a table row (the full
 * sentence as its title and for screen readers), in full elsewhere.
 */
export function ReadingWarnings({ warnings, compact = false }: { warnings: readonly ReadingWarning[]; compact?: boolean }) {
  if (warnings.length === 0) return <span className="text-xs text-ink-muted">none</span>;
  return (
    <ul className="flex flex-col gap-0.5 text-xs text-verdict-undecided">
      {warnings.map((w) => (
        <li key={w.code} className={cn('flex items-start gap-1', compact && 'min-w-28')} data-warning={w.code} title={compact ? w.message : undefined}>
          <WarningIcon />
          {compact ? (
            <span>
              <span aria-hidden="true">{warningWords[w.code]}</span>
              <span className="sr-only">{w.message}</span>
            </span>
          ) : (
            <span>{w.message}</span>
          )}
        </li>
      ))}
    </ul>
  );
}

const calibrationWords: Record<CalibrationState, string> = {
  'in-date': 'calibration in date',
  overdue: 'calibration overdue',
  'no-record': 'no calibration record',
};

/** Calibration state on the day of a reading, as a shape and words. */
export function CalibrationBadge({ state }: { state: CalibrationState }) {
  return (
    <Badge data-calibration={state} className={cn(state === 'overdue' && 'border-danger/50 text-danger')}>
      <svg viewBox="0 0 16 16" className="size-3.5 shrink-0" aria-hidden="true">
        {state === 'in-date' && (
          <path d="M3 8.5l3.2 3L13 4.5" fill="none" stroke="currentColor" strokeWidth="1.8" strokeLinecap="round" strokeLinejoin="round" />
        )}
        {state === 'overdue' && (
          <>
            <path d="M8 1.5 15 14.5H1z" fill="none" stroke="currentColor" strokeWidth="1.5" strokeLinejoin="round" />
            <path d="M8 6v4M8 11.6v.8" stroke="currentColor" strokeWidth="1.5" strokeLinecap="round" />
          </>
        )}
        {state === 'no-record' && <circle cx="8" cy="8" r="5" fill="none" stroke="currentColor" strokeWidth="1.4" strokeDasharray="2 2" />}
      </svg>
      {calibrationWords[state]}
    </Badge>
  );
}

/** "0–6 in depth micrometer · 0.0001 in", "Click wrench · 1 lbf·ft" for a select option. */
export function instrumentOptionText(instrument: Pick<Instrument, 'name' | 'serial' | 'unit' | 'resolution' | 'retired'>): string {
  const serial = instrument.serial ? ` (${instrument.serial})` : '';
  return `${instrument.name}${serial} · ${withReadingUnit(instrument.resolution, instrument.unit)}${instrument.retired ? ' · retired' : ''}`;
}
