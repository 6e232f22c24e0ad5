import type { UnitSystem } from '@shared/measure/format';
import type { PublicStory } from '@shared/public/public-story.schema';
import { comparisons } from '../lib/story-view';
import { BeforeAfterChart } from './before-after-chart';

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
          band={group.clearances[0]?.band ?? null}
          bandUnit={group.clearances[0]?.unit}
          system={system}
          points={group.clearances.map((c) => ({
            id: c.key,
            label: c.name,
            valueUm: c.valueUm,
            expandedUm: c.expandedUncertaintyUm,
            verdict: c.verdict,
          }))}
        />
      ))}
    </section>
  );
}
