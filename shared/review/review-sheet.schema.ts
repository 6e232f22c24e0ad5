/**
 * Responses of the review routes that carry more than one feature's records: the review sheet
 * of one story, a claim on it, a recorded check and a workflow move. Built from the readings',
 * clearances' and review's own schemas so the browser parses exactly what the server sends.
 */
import { z } from 'zod';
import { clearanceSchema } from '../clearances/clearance.schema';
import { anyUnitSchema } from '../measure/calc.schema';
import { quantityKinds } from '../measure/quantities';
import { verdicts } from '../measure/spec';
import { readingSchema } from '../readings/reading.schema';
import { changesRequestedSchema, storyStates } from '../stories/story.schema';
import { heardStates } from './heard-states';
import { evidenceCheckSchema, publishBlockerSchema } from './review.schema';

/** How a claim stands against its target (shared/stories/claims.ts `ClaimStatus`). */
export const claimStatusSchema = z.discriminatedUnion('state', [
  z.object({ state: z.literal('ok') }),
  z.object({ state: z.literal('unknown-target'), message: z.string() }),
  z.object({ state: z.literal('number-disagrees'), message: z.string(), statedUm: z.number().nullable() }),
  z.object({ state: z.literal('verdict-disagrees'), message: z.string() }),
]);

/** A sentence of the story that cites a reading or clearance, with how its words stand. */
export const citingSentenceSchema = z.object({ text: z.string(), line: z.number().int(), status: claimStatusSchema });

/** The latest check of a subject: `current` is false once the subject changed after it. */
export const sheetCheckSchema = z.object({
  checkId: z.number().int().positive(),
  state: z.enum(['checked', 'flagged']),
  current: z.boolean(),
  comment: z.string(),
});
export type SheetCheck = z.infer<typeof sheetCheckSchema>;

/**
 * The second witness of a reading (`shared/review/heard.ts`): what the clip's sound says near its
 * moment, set beside the figure logged. `disagrees` marks the reading for attention; it is not a
 * flag and blocks nothing.
 */
export const heardWitnessSchema = z.object({
  state: z.enum(heardStates),
  /** The line: "heard ‘five hundred sixty four and two tenths’ at 0:00.5 → 564.2 thou = 0.5642 in: agrees with the logged 0.5642 in". */
  text: z.string(),
  /** The figure named, as said (decimal text in its unit): the agreeing one, or the closest that disagrees. */
  figure: z
    .union([
      z.object({ value: z.string(), unit: anyUnitSchema }),
      z.object({ passes: z.string(), stops: z.string(), unit: anyUnitSchema }),
    ])
    .optional(),
  /** When its first word was said, ms from the start of the clip. */
  atMs: z.number().int().nonnegative().optional(),
  /** The words it was read from. */
  words: z.string().optional(),
  /** Said, or shown on the instrument's display (absent before displays were read: said). */
  source: z.enum(['speech', 'display']).optional(),
});
export type HeardWitnessDto = z.infer<typeof heardWitnessSchema>;

/** Who holds a story for review, and until when (a live claim only). */
export const reviewClaimSchema = z.object({
  moderatorId: z.number().int().positive(),
  moderatorName: z.string(),
  expiresAt: z.string(),
});

/**
 * A cited clearance as the story's current publication judged it (its evidence keeps the figures
 * as judged), for a story going round again: the engine, the readings or the spec may have moved
 * since. `method` is null when the publication predates the field (the first engine, always k = 2).
 */
export const asPublishedSchema = z.object({
  revision: z.number().int().positive(),
  verdict: z.enum(verdicts).nullable(),
  display: z.string(),
  /** Lengths only (null for any other quantity, which the sheet reads by `display` and the figures below). */
  valueUm: z.number().nullable(),
  expandedUncertaintyUm: z.number().nonnegative().nullable(),
  method: z.enum(['gum', 'monte-carlo']).nullable(),
  /** The value and U in the published result's unit; absent from sheets made before. */
  quantity: z.enum(quantityKinds).optional(),
  unit: anyUnitSchema.optional(),
  value: z.number().optional(),
  expandedUncertainty: z.number().nonnegative().optional(),
});
export type AsPublished = z.infer<typeof asPublishedSchema>;

/** Response of `GET /api/review/stories/:storyId`: everything needed to check one story. */
export const reviewSheetSchema = z.object({
  story: z.object({
    id: z.number().int().positive(),
    title: z.string(),
    state: z.enum(storyStates),
    lockVersion: z.number().int().positive(),
    buildId: z.number().int().positive(),
    buildTitle: z.string(),
    builderId: z.number().int().positive(),
    body: z.string(),
    submittedAt: z.string().nullable(),
    hasPublicRevision: z.boolean(),
    /** While the story is back with its builder: the moderator's reason. */
    changesRequested: changesRequestedSchema.nullable(),
  }),
  claim: reviewClaimSchema.nullable(),
  readings: z.array(
    z.object({
      reading: readingSchema,
      /** The cited clearances that sum this reading. */
      usedBy: z.array(z.object({ id: z.number().int().positive(), key: z.string(), name: z.string(), display: z.string().nullable() })),
      citedIn: z.array(citingSentenceSchema),
      check: sheetCheckSchema.nullable(),
      /** What was heard on the clip near the reading's moment. Optional: servers before it did not send it. */
      heard: heardWitnessSchema.optional(),
    }),
  ),
  clearances: z.array(
    z.object({
      clearance: clearanceSchema,
      citedIn: z.array(citingSentenceSchema),
      check: sheetCheckSchema.nullable(),
      /**
       * The same clearance (by id) in the story's current publication; null when the story has
       * none or that revision did not cite it. Optional: servers before it did not send it.
       */
      asPublished: asPublishedSchema.nullable().optional(),
      /**
       * What differs from `asPublished`, for the moderator, in words ("too close to call now;
       * within spec when published (revision 2)"); null when the verdict and the figures as
       * shown are the same, or there is nothing published to compare with.
       */
      change: z.string().nullable().optional(),
    }),
  ),
  claims: z.array(z.object({ kind: z.enum(['reading', 'clearance']), key: z.string(), text: z.string(), line: z.number().int(), status: claimStatusSchema })),
  broken: z.array(z.object({ target: z.string(), text: z.string(), start: z.number().int(), end: z.number().int(), line: z.number().int(), message: z.string() })),
  /** Empty for the story's builder (blockers are worked out for moderators). */
  blockers: z.array(publishBlockerSchema),
  /** Every check of the story, newest first, with the builder's answers. */
  checks: z.array(evidenceCheckSchema),
});
export type ReviewSheet = z.infer<typeof reviewSheetSchema>;

/** Response of `POST /api/review/stories/:storyId/claim`. */
export const claimResponseSchema = z.object({ claim: reviewClaimSchema.extend({ storyId: z.number().int().positive() }) });

/** Response of `POST /api/review/checks` and `POST /api/review/checks/:checkId/answers`. */
export const checkResponseSchema = z.object({ check: evidenceCheckSchema });

/** Response of `POST /api/stories/:storyId/transitions`. */
export const transitionResponseSchema = z.object({
  storyId: z.number().int().positive(),
  state: z.enum(storyStates),
  /** The public revision's number after a publish; null otherwise. */
  revision: z.number().int().positive().nullable(),
});
