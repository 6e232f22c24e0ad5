import type { UnitSystem } from '@shared/measure/format';
import type { PublicClearance, PublicStory } from '@shared/public/public-story.schema';
import { isLengthUnit } from '@shared/measure/units';
import { isLengthQuantity } from '@shared/public/quantity-figures';
import { resultShown } from '../lib/figures';
import { comparisons } from '../lib/story-view';
import { BeforeAfterChart, type ChartBand } from './before-after-chart';

/** The band of a group's first result: a length's in µm, any other quantity's in its unit. */
function bandOf(c: PublicClearance | undefined): ChartBand | null {
  if (!c) return null;
  if (isLengthQuantity(c.quantity) && isLengthUnit(c.unit)) return c.band ? { quantity: 'length', band: c.band, bandUnit: c.unit } : null;
  return c.bandInUnit ? { quantity: 'other', limits: c.bandInUnit, unit: c.unit } : null;
}

/** The story's before-and-after charts: clearances of the entry judged against the same spec. Loaded on its own. */
export default function StoryComparisons({ story, system }: { story: PublicStory; system: UnitSystem }) {
  const groups = comparisons(story);
  if (groups.length === 0) return null;
  return (
    <section aria-labelledby="comparisons-heading" className="my-8 flex flex-col gap-4">
      <h2 id="comparisons-heading" className="text-md font-semibold">
        Before and after
      </h2>
      {groups.map((group) => (
        <BeforeAfterChart
          key={group.spec}
          title={`${group.spec}: how the build changed it`}
          band={bandOf(group.clearances[0])}
          system={system}
          points={group.clearances.map((c) => ({
            id: c.key,
            label: c.name,
            shown: resultShown(c),
            verdict: c.verdict,
          }))}
        />
      ))}
    </section>
  );
}
