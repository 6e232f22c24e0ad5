import { formatCoverageFactor } from '@shared/measure/format-quantity';
import type { UnitSystem } from '@shared/measure/format';
import { verdictWords } from '@shared/measure/spec';
import type { PublicStory } from '@shared/public/public-story.schema';
import { limitFacts } from '@shared/public/spec-limits';
import { formatTime } from '@/features/clips/lib/clip-format';
import { instantDay } from '@/lib/dates';
import { limitTextsFor, readingShown, resultShown, shownText } from '../lib/figures';

/**
 * Printed only: each claim's evidence as a numbered note (the numbers match the marks the print
 * stylesheet puts after the claims), so a sheet of paper carries the proof with the words.
 */
export function PrintEvidence({ story, system }: { story: PublicStory; system: UnitSystem }) {
  if (story.claims.length === 0) return null;
  return (
    <section className="mt-8 hidden border-t border-rule pt-4 print:block" aria-label="Evidence for the claims (printed)">
      <h2 className="text-md font-semibold">Evidence for the claims</h2>
      <ol className="mt-2 list-decimal space-y-2 pl-6 text-sm">
        {story.claims.map((claim, index) => {
          const c = claim.clearance;
          const lead = c ? resultShown(c) : claim.readings[0] ? readingShown(claim.readings[0]) : null;
          const limits = c ? limitTextsFor(c, system) : null;
          return (
            <li key={`${claim.kind}:${claim.key}:${index}`}>
              <span className="italic">“{claim.text}”</span>
              {lead && (
                <>
                  {' — '}
                  <strong className="figures font-semibold">{shownText(lead, system).main}</strong>
                  {c?.verdict && c.rule && (
                    <>
                      , {verdictWords[c.verdict]} ({c.rule} rule, k = {formatCoverageFactor(c.coverageFactor)})
                      {limits && limitFacts(c, limits).map((fact) => ` ${fact}`)}
                    </>
                  )}
                </>
              )}
              {c?.spec && (
                <span className="block text-xs">
                  Spec {c.spec.name} v{c.spec.version}
                  {limits ? `, band ${limits.band ?? 'no limits'}` : ''}; source: {c.spec.sourceText}
                </span>
              )}
              <span className="block text-xs">
                {claim.readings
                  .map((r) => `${r.name} ${shownText(readingShown(r), system).value} (${r.instrument.name}; clip “${r.moment.clipTitle}” at ${formatTime(r.moment.atMs / 1000)}; checked by ${r.checked.byName}, ${instantDay(r.checked.at)})`)
                  .join('; ')}
              </span>
            </li>
          );
        })}
      </ol>
    </section>
  );
}
