/**
 * Following builders (mail when they publish) and a reader's preferences.
 */
import { z } from 'zod';
import { dbIdText } from '../http/db-values.schema';
import { unitSystems } from '../measure/format';
import { defaultUnitSystemSchema, temperatureScaleSchema } from '../users/user.schema';
import { publicBuilderRefSchema } from './public-story.schema';

/** Path parameters of the follow routes. */
export const builderIdParamsSchema = z.object({ builderId: dbIdText });

/** A builder the caller follows. */
export const followSchema = z.object({
  builder: publicBuilderRefSchema,
  /** Mail when this builder publishes (off after a one-click unsubscribe). */
  emailOnPublish: z.boolean(),
  since: z.string(),
});
export type Follow = z.infer<typeof followSchema>;

/**
 * Response of `POST /api/builders/:builderId/follow` (201 when new, 200 when already following)
 * and of `PATCH /api/me/follows/:builderId`.
 */
export const followResponseSchema = z.object({ follow: followSchema });

/** Query of `GET /api/me/follows`: keyset on the builder's id. */
export const followListQuerySchema = z.object({
  after: dbIdText.optional(),
  limit: z.coerce.number().int().min(1).max(200).default(100),
});
/** Response of `GET /api/me/follows`; `nextAfter` is null on the last page. */
export const followListResponseSchema = z.object({ items: z.array(followSchema), nextAfter: z.number().int().nullable() });

/** Body of `PATCH /api/me/follows/:builderId`. */
export const followPatchSchema = z.strictObject({ emailOnPublish: z.boolean({ error: 'emailOnPublish must be true or false' }) });
export type FollowPatch = z.infer<typeof followPatchSchema>;

/**
 * A reader's preferences. `units` is the pick made with a story's units switch (null = none yet);
 * `unitSystem` and `temperatureScale` are the account's default units for new figures.
 */
export const preferencesSchema = z.object({
  units: z.enum(unitSystems).nullable(),
  /** A weekly mail of what the builders one follows published. */
  weeklyDigest: z.boolean(),
  /** The account's default units (also on `GET /api/me`); null = not chosen. */
  unitSystem: defaultUnitSystemSchema.nullable(),
  temperatureScale: temperatureScaleSchema.nullable(),
});
export type Preferences = z.infer<typeof preferencesSchema>;

/** Response of `GET` and `PATCH /api/me/preferences`. */
export const preferencesResponseSchema = z.object({ preferences: preferencesSchema });

/** Body of `PATCH /api/me/preferences`: only what is sent changes. */
export const preferencesPatchSchema = z
  .strictObject({
    units: z.enum(unitSystems, { error: 'units must be "imperial", "metric" or null' }).nullable(),
    weeklyDigest: z.boolean({ error: 'weeklyDigest must be true or false' }),
    unitSystem: defaultUnitSystemSchema.nullable(),
    temperatureScale: temperatureScaleSchema.nullable(),
  })
  .partial();
export type PreferencesPatch = z.infer<typeof preferencesPatchSchema>;
