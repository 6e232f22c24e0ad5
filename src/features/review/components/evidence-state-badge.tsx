import type { SheetCheck } from '@shared/review/review-sheet.schema';
import { Badge } from '@/components/ui/badge';
import { cn } from '@/lib/cn';
import { evidenceState, evidenceStateWords, type EvidenceState } from '../lib/review-format';

/** The state's shape: open ring, tick, flag, or a ring with an arrow (changed since its check). */
export function EvidenceStateGlyph({ state, className }: { state: EvidenceState; className?: string }) {
  return (
    <svg viewBox="0 0 16 16" className={cn('size-3.5 shrink-0', className)} aria-hidden="true">
      {state === 'unchecked' && <circle cx="8" cy="8" r="5" fill="none" stroke="currentColor" strokeWidth="1.4" />}
      {state === 'checked' && (
        <path d="M3 8.5l3.2 3L13 4.5" fill="none" stroke="currentColor" strokeWidth="1.8" strokeLinecap="round" strokeLinejoin="round" />
      )}
      {state === 'flagged' && (
        <path d="M4 14.5V2M4 2.5h8l-2 3 2 3H4" fill="currentColor" fillOpacity="0.25" stroke="currentColor" strokeWidth="1.4" strokeLinejoin="round" />
      )}
      {state === 'changed' && (
        <>
          <path d="M13 8a5 5 0 1 1-1.6-3.7" fill="none" stroke="currentColor" strokeWidth="1.5" strokeLinecap="round" />
          <path d="M12.2 1.6v3.2H9" fill="none" stroke="currentColor" strokeWidth="1.5" strokeLinecap="round" strokeLinejoin="round" />
        </>
      )}
    </svg>
  );
}

const tone: Record<EvidenceState, string> = {
  unchecked: '',
  checked: 'border-ink/40',
  flagged: 'border-danger/50 text-danger',
  changed: 'border-verdict-undecided/50 text-verdict-undecided',
};

/** Where a reading or clearance stands in this review, as a shape and words. */
export function EvidenceStateBadge({ check, className }: { check: SheetCheck | null; className?: string }) {
  const state = evidenceState(check);
  return (
    <Badge data-evidence-state={state} className={cn(tone[state], className)}>
      <EvidenceStateGlyph state={state} />
      {evidenceStateWords(state, check)}
    </Badge>
  );
}
