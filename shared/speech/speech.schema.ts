/**
 * What the product heard in a clip's sound: the words an offline recognizer found (with their
 * times and confidences), and the readings those words propose (`findSpokenFigures`). The server
 * serves both under /api/clips/:clipId; the captions are WebVTT text, not JSON.
 */
import { z } from 'zod';
import { dbIdText } from '../http/db-values.schema';
import { allUnits } from '../measure/quantities';

/**
 * Where listening to a clip stands: waiting for its turn, being listened to, done, given up
 * after its retries (`failed`), or not possible on this server because no recognizer is
 * installed (`unavailable`; everything else works without it).
 */
export const listeningStates = ['pending', 'listening', 'ready', 'failed', 'unavailable'] as const;
/** Schema of a listening state. */
export const listeningStateSchema = z.enum(listeningStates);
/** A listening state. */
export type ListeningState = z.infer<typeof listeningStateSchema>;

/** One word heard: milliseconds from the start of the clip's sound, confidence 0…1. */
export const clipWordSchema = z.object({
  word: z.string().min(1),
  startMs: z.number().int().nonnegative(),
  endMs: z.number().int().nonnegative(),
  confidence: z.number().min(0).max(1),
});
/** One word heard. */
export type ClipWord = z.infer<typeof clipWordSchema>;

/**
 * Where the clip's evidence reading stands, as `GET …/transcript` and `GET …/suggestions` say it:
 * waiting (`queued`), under way (`running`), `done`, given up (`failed`), or not possible on this
 * server (`off`: no recognizer, or speech turned off).
 */
export const evidenceStates = ['queued', 'running', 'done', 'failed', 'off'] as const;
/** Schema of an evidence state. */
export const evidenceStateSchema = z.enum(evidenceStates);
/** An evidence state. */
export type EvidenceState = z.infer<typeof evidenceStateSchema>;

/** A listening state as the routes say it. */
export function evidenceStateOf(state: ListeningState): EvidenceState {
  return ({ pending: 'queued', listening: 'running', ready: 'done', failed: 'failed', unavailable: 'off' } as const)[state];
}

/** One word of the transcript: milliseconds from the start of the clip, confidence 0…1. */
export const transcriptWordSchema = z.object({
  startMs: z.number().int().nonnegative(),
  endMs: z.number().int().nonnegative(),
  text: z.string().min(1),
  confidence: z.number().min(0).max(1),
});
/** One word of the transcript. */
export type TranscriptWord = z.infer<typeof transcriptWordSchema>;

/** `GET /api/clips/:clipId/transcript`: the recognizer's markers (silence, sentence ends) and its alternate numbers removed. */
export const clipTranscriptResponseSchema = z.object({
  state: evidenceStateSchema,
  words: z.array(transcriptWordSchema),
});
/** Answer of `GET /api/clips/:clipId/transcript`. */
export type ClipTranscriptResponse = z.infer<typeof clipTranscriptResponseSchema>;

/** Where a suggestion comes from: words heard in the clip's sound, or digits read off an instrument's display in its picture. */
export const suggestionSources = ['speech', 'display'] as const;

const suggestionBase = {
  /**
   * Stable while the words (or the display's readings) stay the same: "<atMs>-<n>" for speech,
   * "d<atMs>-<n>" for a display, n counting figures that start at the same millisecond.
   */
  id: z.string().min(1),
  /** When it was said, or first shown: ms from the start of the clip. */
  atMs: z.number().int().nonnegative(),
  /** When the words ended, or the display changed. */
  endMs: z.number().int().nonnegative(),
  source: z.enum(suggestionSources),
  /** What was heard (the words, cleaned, space-separated: "five hundred sixty four and two tenths") or read ("0.5642"). */
  text: z.string(),
  /** The unit the figures are in: for lengths one of in, thou, tenth, mm, um; other quantities use the engine's unit names. */
  unit: z.enum(allUnits),
  /** 0…1: the least confidence of the figure's words; for a display, the share of its still frames that read the same. */
  confidence: z.number().min(0).max(1),
  /** False when the unit was not said (the builder's usual unit, or tenths read as thou and tenths); always false for a display. */
  unitHeard: z.boolean(),
  /** Why the figure is not just the literal words, when it is not. */
  note: z.string().optional(),
  /** The builder set it aside (`POST …/suggestions/:id/dismiss`; `DELETE` the same brings it back). */
  dismissed: z.boolean().default(false),
  /**
   * A reading is already logged for it: one whose moment in this clip is within ±1.5 s of it and
   * whose figure is the same within its instrument's resolution (`readingKey` names it).
   */
  logged: z.boolean().default(false),
  /** The key of the reading that logged it, when `logged`. */
  readingKey: z.string().optional(),
  /** The id of the reading that logged it, when `logged`. */
  readingId: z.number().int().positive().optional(),
};

/**
 * A reading the clip suggests: a value ("five sixty four and two tenths", or 0.5642 on a display)
 * or a feeler bracket ("three thou slides, four won't go"). Never a reading by itself.
 */
export const suggestionSchema = z.discriminatedUnion('kind', [
  z.object({
    kind: z.literal('direct'),
    /** Decimal text, digits as spoken or shown ("564.2"). */
    value: z.string(),
    /** Set when the value was a feeler blade said with how it went. */
    feel: z.enum(['passes', 'stops']).nullable(),
    ...suggestionBase,
  }),
  z.object({
    kind: z.literal('bracket'),
    /** Decimal text of the blade that passes. */
    passes: z.string(),
    /** Decimal text of the blade that stops; greater than `passes`. */
    stops: z.string(),
    ...suggestionBase,
  }),
]);
/** A reading the clip suggests. */
export type Suggestion = z.infer<typeof suggestionSchema>;

/** What a suggestion id looks like: "<atMs>-<n>", or "d<atMs>-<n>" from a display. */
export const SUGGESTION_ID_PATTERN = /^d?\d{1,10}-\d{1,4}$/;

/** Path of `POST`/`DELETE /api/clips/:clipId/suggestions/:id/dismiss`. */
export const suggestionParamsSchema = z.object({
  clipId: dbIdText,
  id: z.string().regex(SUGGESTION_ID_PATTERN, 'must be a suggestion id like 4120-0 or d4120-0'),
});
/** Path parameters naming one suggestion of one clip. */
export type SuggestionParams = z.infer<typeof suggestionParamsSchema>;

const regionFields = {
  x: z.number().min(0).max(1),
  y: z.number().min(0).max(1),
  width: z.number().gt(0).max(1),
  height: z.number().gt(0).max(1),
};

/** A region must lie within the frame. */
function withinFrame<T extends z.ZodType<{ x: number; y: number; width: number; height: number }>>(schema: T) {
  return schema
    .refine((r) => r.x + r.width <= 1 + 1e-9, { message: 'x + width must be at most 1 (the right edge of the frame)', path: ['width'] })
    .refine((r) => r.y + r.height <= 1 + 1e-9, { message: 'y + height must be at most 1 (the bottom edge of the frame)', path: ['height'] });
}

/** Where an instrument's display is in a clip's picture: fractions 0–1 of the frame from its top left. */
export const displayRegionSchema = withinFrame(z.object(regionFields));
/** A display region. */
export type DisplayRegion = z.infer<typeof displayRegionSchema>;

/**
 * Body of `PUT /api/clips/:clipId/display-region`: the region, and optionally the unit the display
 * shows (a display shows digits, not its unit; without it, the builder's usual unit is taken).
 */
export const displayRegionBodySchema = withinFrame(z.object({ ...regionFields, unit: z.enum(allUnits).optional() }).strict());
/** Body of `PUT /api/clips/:clipId/display-region`. */
export type DisplayRegionBody = z.infer<typeof displayRegionBodySchema>;

/** A clip's display region as the suggestions route gives it, with the unit its values are read in and where reading it stands. */
export const clipDisplayRegionSchema = z.object({
  ...regionFields,
  unit: z.enum(allUnits),
  state: evidenceStateSchema,
});
/** A clip's display region as the suggestions route gives it. */
export type ClipDisplayRegion = z.infer<typeof clipDisplayRegionSchema>;

/**
 * `GET /api/clips/:clipId/suggestions`: the readings heard and read, in the order of their time.
 * `state` is `done` once listening and every display reading asked for have finished.
 */
export const clipSuggestionsResponseSchema = z.object({
  state: evidenceStateSchema,
  suggestions: z.array(suggestionSchema),
  /** The display region set on the clip, if any (fractions of the frame from its top left). */
  displayRegion: clipDisplayRegionSchema.nullable().default(null),
});
/** Answer of `GET /api/clips/:clipId/suggestions`. */
export type ClipSuggestionsResponse = z.infer<typeof clipSuggestionsResponseSchema>;

/** Longest span one caption correction may cover, ms: about a minute of talk at the bench (our rule). */
export const CAPTION_CORRECTION_MAX_SPAN_MS = 60_000;
/** Most characters in one caption correction's text. */
export const CAPTION_CORRECTION_MAX_TEXT = 500;
/** Latest time a correction may name, ms (24 h, as far as a clip's trim points go). */
const CAPTION_TIME_MAX_MS = 86_400_000;

/**
 * A caption correction as the API gives it: the builder's words for a span of the clip, which
 * replace whatever the recognizer heard there (empty text: nothing was said there).
 */
export const captionCorrectionSchema = z.object({
  id: z.number().int().positive(),
  startMs: z.number().int().nonnegative(),
  endMs: z.number().int().nonnegative(),
  text: z.string(),
  /** The id of the account that made it (the clip's builder). */
  correctedBy: z.number().int().positive(),
  /** ISO 8601. */
  updatedAt: z.string(),
});
/** A caption correction. */
export type CaptionCorrection = z.infer<typeof captionCorrectionSchema>;

/** `GET /api/clips/:clipId/caption-corrections`: the clip's corrections in time order. */
export const captionCorrectionListResponseSchema = z.object({ items: z.array(captionCorrectionSchema) });
/** Answer of `GET /api/clips/:clipId/caption-corrections`. */
export type CaptionCorrectionListResponse = z.infer<typeof captionCorrectionListResponseSchema>;

/** Answer of `POST /api/clips/:clipId/caption-corrections` (201). */
export const captionCorrectionResponseSchema = z.object({ correction: captionCorrectionSchema });
/** Answer of `POST /api/clips/:clipId/caption-corrections`. */
export type CaptionCorrectionResponse = z.infer<typeof captionCorrectionResponseSchema>;

const captionTimeMs = z
  .number()
  .int('must be a whole number of milliseconds')
  .min(0, 'at least 0')
  .max(CAPTION_TIME_MAX_MS, `at most ${CAPTION_TIME_MAX_MS} (24 hours)`);

/**
 * Body of `POST /api/clips/:clipId/caption-corrections`: the span (ms from the start of the clip,
 * at most a minute long) and what was said over it, at most 500 characters; empty text says
 * nothing was said there. A correction overlapping others replaces them.
 */
export const captionCorrectionBodySchema = z
  .object({
    startMs: captionTimeMs,
    endMs: captionTimeMs,
    // One line of words, as a caption shows them: spaces, tabs and line breaks become one space.
    text: z
      .string()
      .refine((v) => !v.includes('\u0000'), 'must not contain a NUL character')
      .transform((v) => v.replace(/\s+/g, ' ').trim())
      .pipe(z.string().max(CAPTION_CORRECTION_MAX_TEXT, `at most ${CAPTION_CORRECTION_MAX_TEXT} characters`)),
  })
  .strict()
  .refine((b) => b.endMs >= b.startMs, { message: 'The end must not come before the start', path: ['endMs'] })
  .refine((b) => b.endMs - b.startMs <= CAPTION_CORRECTION_MAX_SPAN_MS, {
    message: `One correction covers at most ${CAPTION_CORRECTION_MAX_SPAN_MS / 1000} s; split a longer one`,
    path: ['endMs'],
  });
/** Body of `POST /api/clips/:clipId/caption-corrections`. */
export type CaptionCorrectionBody = z.infer<typeof captionCorrectionBodySchema>;

/** Path of `DELETE /api/clips/:clipId/caption-corrections/:correctionId`. */
export const captionCorrectionParamsSchema = z.object({ clipId: dbIdText, correctionId: dbIdText });
/** Path parameters naming one caption correction of one clip. */
export type CaptionCorrectionParams = z.infer<typeof captionCorrectionParamsSchema>;
