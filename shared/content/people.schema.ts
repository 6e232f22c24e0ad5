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
