import { formatCoverageFactor } from '@shared/measure/format-quantity';
import type { UnitSystem } from '@shared/measure/format';
import { verdictWords } from '@shared/measure/spec';
import type { PublicStory } from '@shared/public/public-story.schema';
import { limitFacts, specLimitTexts } from '@shared/public/spec-limits';
import { formatTime } from '@/features/clips/lib/clip-format';
import { instantDay } from '../lib/dates';
import { bandText, readingResolutionPm, systemDisplayUnits, systemFigure } from '../lib/figures';

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
          const lead = c ?? claim.readings[0];
          const resolution = !c && claim.readings[0] ? readingResolutionPm(claim.readings[0]) : null;
          return (
            <li key={`${claim.kind}:${claim.key}:${index}`}>
              <span className="italic">“{claim.text}”</span>
              {lead && (
                <>
                  {' — '}
                  <strong className="figures font-semibold">{systemFigure(lead.valueUm, lead.expandedUncertaintyUm, system, resolution).main}</strong>
                  {c?.verdict && c.rule && (
                    <>
                      , {verdictWords[c.verdict]} ({c.rule} rule, k = {formatCoverageFactor(c.coverageFactor)})
                      {c.band && limitFacts(c, specLimitTexts(c.band, c.unit, systemDisplayUnits[system].main)).map((fact) => ` ${fact}`)}
                    </>
                  )}
                </>
              )}
              {c?.spec && (
                <span className="block text-xs">
                  Spec {c.spec.name} v{c.spec.version}
                  {c.band ? `, band ${bandText(c.band, c.unit, systemDisplayUnits[system].main)}` : ''}; source: {c.spec.sourceText}
                </span>
              )}
              <span className="block text-xs">
                {claim.readings
                  .map((r) => `${r.name} ${systemFigure(r.valueUm, r.expandedUncertaintyUm, system, readingResolutionPm(r)).value} (${r.instrument.name}; clip “${r.moment.clipTitle}” at ${formatTime(r.moment.atMs / 1000)}; checked by ${r.checked.byName}, ${instantDay(r.checked.at)})`)
                  .join('; ')}
              </span>
            </li>
          );
        })}
      </ol>
    </section>
  );
}
