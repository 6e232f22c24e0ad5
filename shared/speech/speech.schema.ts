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

/** `GET /api/clips/:clipId/words`: the recognizer's markers (silence, sentence ends) and its alternate numbers removed. */
export const clipWordsResponseSchema = z.object({
  state: listeningStateSchema,
  words: z.array(clipWordSchema),
});
/** Answer of `GET /api/clips/:clipId/words`. */
export type ClipWordsResponse = z.infer<typeof clipWordsResponseSchema>;

const proposalBase = {
  /** Stable while the words stay the same: "<startMs>-<n>", n counting figures that start at the same millisecond. */
  id: z.string().min(1),
  unit: z.enum(allUnits),
  startMs: z.number().int().nonnegative(),
  endMs: z.number().int().nonnegative(),
  /** The least confidence of the figure's words, 0…1. */
  confidence: z.number().min(0).max(1),
  /** The words the figure was read from, cleaned, space-separated ("five hundred sixty four and two tenths"). */
  heard: z.string(),
  /** False when the unit was not said (the builder's usual unit, or tenths read as thou and tenths). */
  unitHeard: z.boolean(),
  /** Why the figure is not just the literal words, when it is not. */
  note: z.string().optional(),
  /** The builder set it aside (`POST …/proposals/:proposalId/dismiss`; `DELETE` the same brings it back). */
  dismissed: z.boolean().default(false),
  /**
   * A reading is already logged for it: one whose moment in this clip is within ±1.5 s of the
   * words and whose figure is the same within its instrument's resolution (`readingKey` names it).
   */
  logged: z.boolean().default(false),
  /** The key of the reading that logged it, when `logged`. */
  readingKey: z.string().optional(),
  /** The id of the reading that logged it, when `logged`. */
  readingId: z.number().int().positive().optional(),
};

/** A reading proposed from speech: a value ("five sixty four and two tenths") or a feeler bracket ("three thou slides, four won't go"). */
export const speechProposalSchema = z.discriminatedUnion('kind', [
  z.object({
    kind: z.literal('value'),
    /** Decimal text, digits as spoken ("564.2"). */
    value: z.string(),
    /** Set when the value was a feeler blade said with how it went. */
    feel: z.enum(['passes', 'stops']).nullable(),
    ...proposalBase,
  }),
  z.object({
    kind: z.literal('bracket'),
    /** Decimal text of the blade that passes. */
    passes: z.string(),
    /** Decimal text of the blade that stops; greater than `passes`. */
    stops: z.string(),
    ...proposalBase,
  }),
]);
/** A reading proposed from speech. */
export type SpeechProposal = z.infer<typeof speechProposalSchema>;

/** What a proposal id looks like: "<startMs>-<n>". */
export const PROPOSAL_ID_PATTERN = /^\d{1,10}-\d{1,4}$/;

/** Path of `POST`/`DELETE /api/clips/:clipId/proposals/:proposalId/dismiss`. */
export const proposalParamsSchema = z.object({
  clipId: dbIdText,
  proposalId: z.string().regex(PROPOSAL_ID_PATTERN, 'must be a proposal id like 4120-0'),
});
/** Path parameters naming one proposal of one clip. */
export type ProposalParams = z.infer<typeof proposalParamsSchema>;

/** `GET /api/clips/:clipId/proposals`: the readings heard, in the order they were said. */
export const clipProposalsResponseSchema = z.object({
  state: listeningStateSchema,
  items: z.array(speechProposalSchema),
});
/** Answer of `GET /api/clips/:clipId/proposals`. */
export type ClipProposalsResponse = z.infer<typeof clipProposalsResponseSchema>;
