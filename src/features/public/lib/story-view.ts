import type { PublicClaim, PublicClearance, PublicStory } from '@shared/public/public-story.schema';

/**
 * `clearance:end-float`, as the rendered body's `data-claim` writes it (shared/stories/claims.ts
 * `claimTargetKey`; not imported, so the reader's page does not load the Markdown parser).
 */
export function claimKeyOf(kind: PublicClaim['kind'], key: string): string {
  return `${kind}:${key}`;
}

/** The address of a claim's evidence panel. */
export function claimPath(storyId: number, kind: PublicClaim['kind'], key: string): string {
  return `/stories/${storyId}/claims/${claimKeyOf(kind, key)}`;
}

/** The claim a panel address names ("clearance:end-float"), or null. */
export function findClaim(story: PublicStory, claimKey: string | undefined): PublicClaim | null {
  if (!claimKey) return null;
  return story.claims.find((c) => claimKeyOf(c.kind, c.key) === claimKey) ?? null;
}

/** Who checked the readings and clearances the story cites, and the day of the last check. */
export function checkedSummary(story: PublicStory): { names: string[]; lastAt: string | null } {
  const names = new Set<string>();
  let lastAt: string | null = null;
  for (const claim of story.claims) {
    const checks = [...claim.readings.map((r) => r.checked), ...(claim.clearance ? [claim.clearance.checked] : [])];
    for (const check of checks) {
      names.add(check.byName);
      if (!lastAt || check.at > lastAt) lastAt = check.at;
    }
  }
  return { names: [...names], lastAt };
}

/** "Ines", "Ines and Dagny", "Ines, Dagny and Sam". */
export function listWords(names: readonly string[]): string {
  if (names.length <= 1) return names[0] ?? '';
  return `${names.slice(0, -1).join(', ')} and ${names[names.length - 1]}`;
}

/**
 * Clearances of the story judged against the same spec, two or more of them (end float as
 * supplied and after facing): the story's before-and-after comparisons, in reading order.
 */
export function comparisons(story: PublicStory): { spec: string; clearances: PublicClearance[] }[] {
  const groups = new Map<string, PublicClearance[]>();
  const seen = new Set<string>();
  for (const claim of story.claims) {
    const c = claim.clearance;
    if (!c || !c.spec || seen.has(c.key)) continue;
    seen.add(c.key);
    const group = groups.get(c.spec.name) ?? [];
    group.push(c);
    groups.set(c.spec.name, group);
  }
  return [...groups].filter(([, list]) => list.length >= 2).map(([spec, clearances]) => ({ spec, clearances }));
}
