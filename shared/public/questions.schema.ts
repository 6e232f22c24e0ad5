/**
 * Readers' questions on a published story and the builder's answers. Plain text only: stored as
 * typed and shown as text, never as HTML.
 */
import { z } from 'zod';
import { dbIdText } from '../http/db-values.schema';

/** Longest question (characters). */
export const MAX_QUESTION = 2000;

/** Body of `POST /api/public/stories/:storyId/questions`. */
export const questionInputSchema = z.strictObject({
  body: z
    .string({ error: 'write your question' })
    .trim()
    .min(3, 'write a question of at least 3 characters')
    .max(MAX_QUESTION, `at most ${MAX_QUESTION} characters`),
});

/** Body of `POST /api/questions/:questionId/answer` (answering again replaces the answer). */
export const answerInputSchema = z.strictObject({
  body: z.string({ error: 'write your answer' }).trim().min(1, 'write an answer').max(4000, 'at most 4000 characters'),
});

/** Body of `POST /api/questions/:questionId/hide`. */
export const hideInputSchema = z.strictObject({
  reason: z.string({ error: 'say why it is hidden' }).trim().min(3, 'say why it is hidden (at least 3 characters)').max(500, 'at most 500 characters'),
});

export const questionIdParamsSchema = z.object({ questionId: dbIdText });

/** Query of the question list: oldest first, keyset on id. */
export const questionListQuerySchema = z.object({
  after: dbIdText.optional(),
  limit: z.coerce.number().int().min(1).max(100).default(50),
});

/** A question as the API shows it. */
export const questionSchema = z.object({
  id: z.number().int().positive(),
  storyId: z.number().int().positive(),
  /** As typed; show as text. */
  body: z.string(),
  author: z.object({ id: z.number().int().positive(), login: z.string(), displayName: z.string() }),
  createdAt: z.string(),
  /** Hidden questions are listed only to moderators, admins and the story's builder. */
  hidden: z.boolean(),
  /** Why it was hidden; only to those who may see hidden questions. */
  hiddenReason: z.string().nullable(),
  answer: z
    .object({ body: z.string(), at: z.string(), by: z.object({ id: z.number().int().positive(), displayName: z.string() }) })
    .nullable(),
});
export type Question = z.infer<typeof questionSchema>;

export const questionResponseSchema = z.object({ question: questionSchema });

/** Response of `GET /api/public/stories/:storyId/questions`. */
export const questionListResponseSchema = z.object({
  items: z.array(questionSchema),
  nextAfter: z.number().int().nullable(),
  /** The caller may answer (the story's builder). */
  canAnswer: z.boolean(),
  /** The caller may hide and unhide (moderators, admins). */
  canModerate: z.boolean(),
  /** The caller may ask (signed in). */
  canAsk: z.boolean(),
});
export type QuestionList = z.infer<typeof questionListResponseSchema>;
