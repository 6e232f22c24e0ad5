import type { CalibrationState } from '@shared/instruments/instrument.schema';
import { cn } from '@/lib/cn';

/** Our words for the calibration states. */
export const calibrationWords: Record<CalibrationState, string> = {
  'in-date': 'In date',
  overdue: 'Overdue',
  'no-record': 'No record',
};

const tone: Record<CalibrationState, string> = {
  'in-date': 'border-ink/40 text-ink',
  overdue: 'border-danger bg-danger-wash text-danger',
  'no-record': 'border-dashed border-line text-ink-muted',
};

/**
 * A calibration state as shape + words (a tick in a square, a warning triangle, a dashed
 * circle), so it reads in print and without colour. Shapes differ from the verdict shapes on
 * purpose: this is about the instrument, not about a measured value.
 */
export function CalibrationBadge({ state, className }: { state: CalibrationState; className?: string }) {
  return (
    <span
      data-calibration={state}
      className={cn('inline-flex items-center gap-1.5 rounded-sm border bg-paper px-1.5 py-px text-xs font-medium whitespace-nowrap', tone[state], className)}
    >
      <svg viewBox="0 0 16 16" className="size-[1.05em] shrink-0" aria-hidden="true">
        {state === 'in-date' && (
          <>
            <rect x="2" y="2" width="12" height="12" rx="1.5" fill="none" stroke="currentColor" strokeWidth="1.4" />
            <path d="M4.8 8.3l2.2 2.2 4.3-4.6" fill="none" stroke="currentColor" strokeWidth="1.6" strokeLinecap="round" strokeLinejoin="round" />
          </>
        )}
        {state === 'overdue' && (
          <>
            <path d="M8 1.6 15 14.2H1z" fill="currentColor" />
            <path d="M8 6v4M8 11.7v.7" stroke="var(--color-paper)" strokeWidth="1.6" strokeLinecap="round" />
          </>
        )}
        {state === 'no-record' && <circle cx="8" cy="8" r="5.6" fill="none" stroke="currentColor" strokeWidth="1.4" strokeDasharray="2.4 2" />}
      </svg>
      <span>{calibrationWords[state]}</span>
    </span>
  );
}
