import { z } from 'zod';
import { dbIdText, textWithoutNul } from '../http/db-values.schema';

/** Where a clip is in its life. `failed` always comes with a reason a person can act on. */
export const clipStatuses = ['uploaded', 'processing', 'ready', 'failed'] as const;
export const clipStatusSchema = z.enum(clipStatuses);
export type ClipStatus = z.infer<typeof clipStatusSchema>;

/** What probing found in the uploaded file. */
export const clipProbeSchema = z.object({
  container: z.string(),
  videoCodec: z.string(),
  audioCodec: z.string().nullable(),
  durationS: z.number().nonnegative(),
  width: z.number().int().positive(),
  height: z.number().int().positive(),
  /** Frames per second as a number (e.g. 29.97). */
  frameRate: z.number().positive(),
  /** Display rotation in degrees (0, 90, 180, 270). */
  rotation: z.number().int(),
});
export type ClipProbe = z.infer<typeof clipProbeSchema>;

/** How the web copy was made: the original kept as is, remuxed (streams copied), or transcoded. */
export const webCopyKindSchema = z.enum(['original', 'remux', 'transcode']);

/** A strip of small thumbnails for scrubbing: `count` tiles of `width`×`height`, one every `intervalS`. */
export const thumbnailStripSchema = z.object({
  count: z.number().int().positive(),
  intervalS: z.number().positive(),
  width: z.number().int().positive(),
  height: z.number().int().positive(),
});

/** A clip as the API shows it. Media URLs are same-origin paths; null until they exist. */
export const clipSchema = z.object({
  id: z.number().int().positive(),
  buildId: z.number().int().positive(),
  title: z.string(),
  position: z.number().int().nonnegative(),
  status: clipStatusSchema,
  /** 0–100 while processing. */
  progress: z.number().min(0).max(100),
  failureReason: z.string().nullable(),
  originalName: z.string(),
  sizeBytes: z.number().int().nonnegative(),
  probe: clipProbeSchema.nullable(),
  webCopy: webCopyKindSchema.nullable(),
  /** Shown range, seconds; null = from the start / to the end. The original is never cut. */
  trimInS: z.number().nonnegative().nullable(),
  trimOutS: z.number().positive().nullable(),
  thumbnails: thumbnailStripSchema.nullable(),
  videoUrl: z.string().nullable(),
  posterUrl: z.string().nullable(),
  thumbnailsUrl: z.string().nullable(),
  chaptersUrl: z.string(),
  momentCount: z.number().int().nonnegative(),
  createdAt: z.string(),
});
export type Clip = z.infer<typeof clipSchema>;

export const clipResponseSchema = z.object({ clip: clipSchema });
export const clipListResponseSchema = z.object({ items: z.array(clipSchema) });

/** Path parameters naming one clip. */
export const clipIdParamsSchema = z.object({ clipId: dbIdText });

/** Body of `PATCH /api/clips/:clipId`: rename and trim (seconds; null clears a point). */
export const clipPatchSchema = z
  .object({
    title: textWithoutNul.trim().min(1).max(160).optional(),
    trimInS: z.number().nonnegative().max(86_400).nullable().optional(),
    trimOutS: z.number().positive().max(86_400).nullable().optional(),
  })
  .strict()
  .refine((b) => b.trimInS == null || b.trimOutS == null || b.trimOutS > b.trimInS, {
    message: 'The out point must come after the in point',
    path: ['trimOutS'],
  });
export type ClipPatch = z.infer<typeof clipPatchSchema>;

/** Body of `PUT /api/builds/:buildId/clips/order`: every clip id of the build, in the new order. */
export const clipOrderSchema = z.object({ clipIds: z.array(z.number().int().positive()).min(1).max(500) }).strict();

/** Query of `GET /api/clips/:clipId/frame`: the time of the still, seconds (to the millisecond). */
export const frameQuerySchema = z.object({ t: z.coerce.number().nonnegative().max(86_400) });

/** A moment: a time marked in a clip, where a reading is (or will be) taken. */
export const momentSchema = z.object({
  id: z.number().int().positive(),
  clipId: z.number().int().positive(),
  /** Milliseconds from the start of the original clip. */
  atMs: z.number().int().nonnegative(),
  label: z.string(),
  frameUrl: z.string(),
  createdAt: z.string(),
});
export type Moment = z.infer<typeof momentSchema>;

/** Body of `POST /api/clips/:clipId/moments` and `PATCH /api/moments/:momentId`. */
const momentFields = {
  atMs: z.number().int().nonnegative().max(86_400_000),
  label: textWithoutNul.trim().max(160),
};
export const momentInputSchema = z.object({ atMs: momentFields.atMs, label: momentFields.label.default('') });
/** Only the fields sent change (no defaults filled in, so a nudge keeps the label). */
export const momentPatchSchema = z.object(momentFields).partial().strict();
export const momentIdParamsSchema = z.object({ momentId: dbIdText });
export const momentListResponseSchema = z.object({ items: z.array(momentSchema) });
export const momentResponseSchema = z.object({ moment: momentSchema });

/** Form field name of the file in `POST /api/builds/:buildId/clips` (multipart). */
export const clipUploadField = 'file';

/** Where a build's resumable uploads (tus 1.0.0) are created: `POST` here answers 201 with the upload's `Location`. */
export const resumableUploadsPath = (buildId: number) => `/api/builds/${buildId}/uploads`;

/** Path parameters naming one resumable upload: its build and its generated id (32 hex digits). */
export const uploadParamsSchema = z.object({ buildId: dbIdText, uploadId: z.string().regex(/^[0-9a-f]{32}$/, 'not an upload id') });

/**
 * Response header naming the clip a resumable upload became: on the `PATCH` that brings the last
 * byte, and on a `HEAD` of the upload after that (until it expires).
 */
export const uploadClipIdHeader = 'Benchproof-Clip-Id';
