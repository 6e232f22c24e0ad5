import { z } from 'zod';
import { roleSchema } from '../users/user.schema';

/** One invented demo person in content/people.json. */
export const demoPersonSchema = z.object({
  login: z.string().regex(/^[a-z0-9-]{1,39}$/),
  githubId: z.number().int().positive(),
  name: z.string().min(1),
  email: z.string().email(),
  shop: z.string().nullable(),
  role: roleSchema,
  bio: z.string(),
});

/** The whole content/people.json file. */
export const demoPeopleFileSchema = z.object({ note: z.string(), people: z.array(demoPersonSchema).min(1) });

export type DemoPerson = z.infer<typeof demoPersonSchema>;

/** One invented demo build in content/builds.json. */
export const demoBuildSchema = z.object({
  owner: z.string(),
  title: z.string().min(3),
  subject: z.string(),
  parts: z.array(z.object({ name: z.string(), serial: z.string() })),
  /** Generated at seed time: a narrated scene (an instrument display and the builder’s spoken lines, see server/db/seed-clips.ts) with this caption, `seconds` long, and its marked moments. */
  clips: z
    .array(
      z.object({
        title: z.string(),
        caption: z.string(),
        seconds: z.number().positive().max(60),
        moments: z.array(z.object({ atMs: z.number().int().nonnegative(), label: z.string() })),
      }),
    )
    .default([]),
});

/** The whole content/builds.json file. */
export const demoBuildsFileSchema = z.object({ note: z.string(), builds: z.array(demoBuildSchema) });
export type DemoBuild = z.infer<typeof demoBuildSchema>;
