import type { PublishBlocker } from '@shared/review/review.schema';
import { WarningIcon } from '@/features/readings/components/reading-badges';
import { EvidenceStateGlyph } from './evidence-state-badge';

function BlockerGlyph({ code }: { code: PublishBlocker['code'] }) {
  if (code === 'unchecked') return <EvidenceStateGlyph state="unchecked" className="mt-0.5" />;
  if (code === 'flagged') return <EvidenceStateGlyph state="flagged" className="mt-0.5 text-danger" />;
  return <WarningIcon className="text-danger" />;
}

/** Every reason publishing would be refused now, from the review sheet; refreshed after each check. */
export function BlockersList({ blockers, onOpen }: { blockers: readonly PublishBlocker[]; onOpen: (subject: PublishBlocker['subject']) => void }) {
  if (blockers.length === 0) {
    return (
      <p className="flex items-start gap-1.5 text-sm" data-blockers="0">
        <EvidenceStateGlyph state="checked" className="mt-1" />
        Nothing stops publishing: every reading and clearance is checked and every claim holds.
      </p>
    );
  }
  return (
    <ul className="flex flex-col gap-1.5 text-sm" aria-label="What stops publishing" data-blockers={blockers.length}>
      {blockers.map((b, i) => (
        <li key={`${b.code}-${b.subject.key ?? ''}-${i}`} className="flex items-start gap-1.5" data-blocker={b.code}>
          <BlockerGlyph code={b.code} />
          <span className="min-w-0">
            {b.message}
            {(b.subject.type === 'reading' || b.subject.type === 'clearance') && b.subject.key && (
              <>
                {' '}
                <button type="button" className="text-accent underline underline-offset-2" onClick={() => onOpen(b.subject)}>
                  Show it
                </button>
              </>
            )}
          </span>
        </li>
      ))}
    </ul>
  );
}
