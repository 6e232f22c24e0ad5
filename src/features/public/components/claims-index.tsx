import type { UnitSystem } from '@shared/measure/format';
import type { PublicStory } from '@shared/public/public-story.schema';
import { verdictLabel, VerdictMark } from '@/components/ui/badge';
import { readingShown, resultShown, shownText } from '../lib/figures';

/**
 * The margin on wide screens while no claim is open: every claim of the entry with its figure,
 * each a way into its evidence (the same as the claim in the text).
 */
export function ClaimsIndex({ story, system, onOpen }: { story: PublicStory; system: UnitSystem; onOpen: (index: number) => void }) {
  if (story.claims.length === 0) return null;
  return (
    <nav aria-label="Claims in this story" className="sticky top-4 hidden rounded-lg border border-rule p-4 lg:block" data-print="hide">
      <h2 className="text-sm font-semibold">Claims in this story</h2>
      <p className="mt-1 text-xs text-ink-muted">Underlined in the text. Open one to see its reading, its clip and how it was worked out.</p>
      <ol className="mt-3 flex flex-col gap-2">
        {story.claims.map((claim, index) => {
          const lead = claim.clearance ? resultShown(claim.clearance) : claim.readings[0] ? readingShown(claim.readings[0]) : null;
          return (
            <li key={`${claim.kind}:${claim.key}:${index}`}>
              <button
                type="button"
                onClick={() => onOpen(index)}
                className="flex w-full flex-col items-start gap-0.5 rounded-md border border-transparent px-2 py-1.5 text-left hover:border-rule hover:bg-paper-2"
              >
                <span className="font-serif text-sm leading-snug">{claim.text}</span>
                {lead && (
                  <span className="flex items-center gap-1.5 text-xs text-ink-muted">
                    {claim.verdict && <VerdictMark verdict={claim.verdict} />}
                    <span className="figures">{shownText(lead, system).main}</span>
                    {claim.verdict && <span>· {verdictLabel(claim.verdict).toLowerCase()}</span>}
                  </span>
                )}
              </button>
            </li>
          );
        })}
      </ol>
    </nav>
  );
}
