import { z } from 'zod';
import { dbIdText, textWithoutNul } from '../http/db-values.schema';

/** A part of a build, with its serial number as stamped or tagged. */
export const partInputSchema = z.object({
  /** Present for a part that already exists: it keeps its id (readings will point at it). */
  id: z.number().int().positive().optional(),
  name: textWithoutNul.trim().min(1, 'Name the part').max(120),
  serial: textWithoutNul.trim().max(80).default(''),
});

const buildFields = {
  title: textWithoutNul.trim().min(3, 'Give the build a title of at least 3 characters').max(160),
  subject: textWithoutNul.trim().max(300),
  parts: z.array(partInputSchema).max(100),
};

/** Body of `POST /api/builds`. */
export const buildInputSchema = z.object({
  title: buildFields.title,
  subject: buildFields.subject.default(''),
  parts: buildFields.parts.default([]),
});
/** Body of `PATCH /api/builds/:id`: only the fields sent change (no defaults filled in). */
export const buildPatchSchema = z.object(buildFields).partial().strict();
export type BuildInput = z.input<typeof buildInputSchema>;
export type BuildPatch = z.infer<typeof buildPatchSchema>;

export const partSchema = z.object({ id: z.number().int(), name: z.string(), serial: z.string() });

/** A build as the API shows it. */
export const buildSchema = z.object({
  id: z.number().int().positive(),
  ownerId: z.number().int().positive(),
  ownerName: z.string(),
  title: z.string(),
  subject: z.string(),
  parts: z.array(partSchema),
  clipCount: z.number().int().nonnegative(),
  createdAt: z.string(),
  updatedAt: z.string(),
});
export type Build = z.infer<typeof buildSchema>;

export const buildResponseSchema = z.object({ build: buildSchema });

/** Query of `GET /api/builds`: the signed-in builder's own builds, newest first, by keyset. */
export const listBuildsQuerySchema = z.object({
  before: dbIdText.optional(),
  limit: z.coerce.number().int().min(1).max(100).default(20),
});
export const listBuildsResponseSchema = z.object({ items: z.array(buildSchema), nextBefore: z.number().int().nullable() });
export type ListBuildsResponse = z.infer<typeof listBuildsResponseSchema>;

/** Path parameters naming one build. */
export const buildIdParamsSchema = z.object({ buildId: dbIdText });
