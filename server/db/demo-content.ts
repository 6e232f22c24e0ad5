import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { z } from 'zod';
import { allUnits } from '@shared/measure/quantities';
import { demoBuildSchema, demoBuildsFileSchema, demoPeopleFileSchema, type DemoPerson } from '@shared/content/people.schema';

/** The project's content/ folder (the invented demo scenario). */
export const contentDir = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '../../content');

/** The invented demo people, validated. */
export function loadDemoPeople(dir = contentDir): DemoPerson[] {
  const raw = JSON.parse(fs.readFileSync(path.join(dir, 'people.json'), 'utf8'));
  return demoPeopleFileSchema.parse(raw).people;
}

const sharedDemoClipSchema = demoBuildSchema.shape.clips.removeDefault().element;

/**
 * A moment of a demo clip as the seed narrates it: `say` is the line the invented builder speaks
 * about 0.6 s before the moment (festival), `show` the figure the instrument display shows around
 * it ("0.5642", "3|4" for a feeler bracket: the blade that passes, the one that stops).
 */
export const demoClipMomentSchema = sharedDemoClipSchema.shape.moments.element.extend({
  say: z.string().min(1).max(200).optional(),
  show: z.string().regex(/^[0-9.|-]{1,12}$/).optional(),
});
/**
 * A demo clip with its narrated moments; `displayUnit` marks its instrument display for reading
 * (the seed sets the display region in that unit, as the builder would with "Mark a display").
 */
export const demoClipSchema = sharedDemoClipSchema.extend({
  moments: z.array(demoClipMomentSchema),
  displayUnit: z.enum(allUnits).optional(),
});
const narratedBuildsFileSchema = demoBuildsFileSchema.extend({
  builds: z.array(demoBuildSchema.extend({ clips: z.array(demoClipSchema).default([]) })),
});

/** One invented demo build with its narrated clips. */
export type DemoBuildWithClips = z.infer<typeof narratedBuildsFileSchema>['builds'][number];
/** One demo clip with its narrated moments. */
export type DemoClip = z.infer<typeof demoClipSchema>;

/** The invented demo builds, validated (with the clips' narration). */
export function loadDemoBuilds(dir = contentDir): DemoBuildWithClips[] {
  const raw = JSON.parse(fs.readFileSync(path.join(dir, 'builds.json'), 'utf8'));
  return narratedBuildsFileSchema.parse(raw).builds;
}
