/**
 * Review: moderators check each reading and clearance a story cites against the footage,
 * flag what does not hold up, and publish; every move is in the audit log.
 */
import { z } from 'zod';
import { dbBigintIdText, dbIdText, dbPositiveInteger, instantIdCursor, textWithoutNul } from '../http/db-values.schema';
import { storyActions } from './workflow';
import { storyStates } from '../stories/story.schema';

/** Body of `POST /api/stories/:storyId/transitions`. */
export const transitionInputSchema = z.strictObject({
  action: z.enum(storyActions, { error: `action must be one of ${storyActions.join(', ')}` }),
  reason: textWithoutNul.trim().max(2000, 'at most 2000 characters').optional(),
  /** The story version the person was looking at; a newer one is refused (409 edit_conflict). */
  lockVersion: dbPositiveInteger,
});
/** A parsed transition body. */
export type TransitionInput = z.infer<typeof transitionInputSchema>;

/** Why publishing is refused, one line per problem (409 `publish_blocked`, one detail each, `path` = the code). */
export const publishBlockerCodes = [
  'unchecked',
  'changed-since-checked',
  'flagged',
  'claim-broken',
  'claim-unknown',
  'claim-disagrees',
  'spec-without-source',
  'own-story',
  'no-claim-held',
  'no-claims',
] as const;
/** One reason publishing is refused: its code, words a moderator can act on, and what it is about. */
export const publishBlockerSchema = z.object({
  code: z.enum(publishBlockerCodes),
  message: z.string(),
  subject: z.object({ type: z.enum(['reading', 'clearance', 'claim', 'story']), key: z.string().nullable() }),
});
/** One reason publishing is refused. */
export type PublishBlocker = z.infer<typeof publishBlockerSchema>;

/** Body of `POST /api/review/checks`: one judgement of a reading or clearance, for a story. */
export const checkInputSchema = z
  .strictObject({
    storyId: z.number().int().positive(),
    subjectType: z.enum(['reading', 'clearance']),
    subjectId: z.number().int().positive(),
    state: z.enum(['checked', 'flagged']),
    comment: z.string().trim().max(2000, 'at most 2000 characters').default(''),
  })
  .refine((c) => c.state !== 'flagged' || c.comment.length >= 3, {
    path: ['comment'],
    message: 'say what is wrong (at least 3 characters), e.g. "the blade shown is not the one logged"',
  });

/** Body of `POST /api/review/checks/:checkId/answers`. */
export const answerInputSchema = z.strictObject({
  body: z.string().trim().min(3, 'write an answer (at least 3 characters)').max(4000, 'at most 4000 characters'),
});

/** The builder's answer to a flag, as the API shows it. */
export const checkAnswerSchema = z.object({
  id: z.number().int().positive(),
  body: z.string(),
  authorId: z.number().int().positive(),
  authorName: z.string(),
  createdAt: z.string(),
});

/** A moderator's check or flag of one reading or clearance, with the builder's answers. */
export const evidenceCheckSchema = z.object({
  id: z.number().int().positive(),
  storyId: z.number().int().positive(),
  subjectType: z.enum(['reading', 'clearance']),
  subjectId: z.number().int().positive(),
  subjectKey: z.string(),
  subjectName: z.string(),
  /** The version judged; `current` is false once the reading or clearance has changed since. */
  subjectLockVersion: z.number().int().positive(),
  current: z.boolean(),
  state: z.enum(['checked', 'flagged']),
  comment: z.string(),
  moderatorId: z.number().int().positive(),
  moderatorName: z.string(),
  createdAt: z.string(),
  answers: z.array(checkAnswerSchema),
});
/** A check as the API shows it. */
export type EvidenceCheckDto = z.infer<typeof evidenceCheckSchema>;

/** Response of `GET /api/review/builds/:buildId/flags`: the flags standing on the build's readings and clearances. */
export const buildFlagsResponseSchema = z.object({ items: z.array(evidenceCheckSchema.extend({ storyTitle: z.string() })) });
export type BuildFlag = z.infer<typeof buildFlagsResponseSchema>['items'][number];

/** One row of the review queue. */
export const queueItemSchema = z.object({
  storyId: z.number().int().positive(),
  title: z.string(),
  state: z.enum(storyStates),
  buildId: z.number().int().positive(),
  buildTitle: z.string(),
  builderId: z.number().int().positive(),
  builderName: z.string(),
  submittedAt: z.string(),
  readings: z.number().int().nonnegative(),
  clearances: z.number().int().nonnegative(),
  /** Readings and clearances the story relies on that have no current check yet (flags count as left). */
  leftToCheck: z.number().int().nonnegative(),
  /** Claims whose text its evidence contradicts now, or that point at nothing: one line each. */
  claimProblems: z.array(z.string()),
  claim: z.object({ moderatorId: z.number().int().positive(), moderatorName: z.string(), expiresAt: z.string() }).nullable(),
  /** Already published once: this is a new revision. */
  republication: z.boolean(),
});
/** Response of `GET /api/review/queue`: oldest sent first; pass `nextAfter` as `after` for the next page. */
export const queueResponseSchema = z.object({ items: z.array(queueItemSchema), nextAfter: z.string().nullable() });
/** Query of `GET /api/review/queue`. */
export const queueQuerySchema = z.object({
  /** Keyset: `<submittedAt ISO>_<storyId>` of the last row seen. */
  after: instantIdCursor('after must be a cursor from a previous page').optional(),
  limit: z.coerce.number().int().min(1).max(100).default(50),
});

/** One line of the audit log: who did what to what, when, with the state before and after. */
export const auditEntrySchema = z.object({
  id: z.string(),
  at: z.string(),
  actorId: z.number().int().positive().nullable(),
  actorName: z.string().nullable(),
  action: z.string(),
  subjectType: z.string(),
  subjectId: z.number().int(),
  storyId: z.number().int().nullable(),
  before: z.record(z.string(), z.unknown()).nullable(),
  after: z.record(z.string(), z.unknown()).nullable(),
  note: z.string(),
});
/** Response of the audit routes: newest first; pass `nextBefore` as `before` for older lines. */
export const auditListResponseSchema = z.object({ items: z.array(auditEntrySchema), nextBefore: z.string().nullable() });
/** Query of `GET /api/review/audit` and `GET /api/stories/:storyId/audit`. */
export const auditQuerySchema = z.object({
  storyId: dbIdText.optional(),
  /** An audit line id (BIGINT), as text. */
  before: dbBigintIdText.optional(),
  limit: z.coerce.number().int().min(1).max(200).default(100),
});
