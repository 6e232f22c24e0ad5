import { Router, type Request } from 'express';
import { rateLimit } from 'express-rate-limit';
import { publicStoryParamsSchema } from '@shared/public/public-story.schema';
import { answerInputSchema, hideInputSchema, questionIdParamsSchema, questionInputSchema, questionListQuerySchema } from '@shared/public/questions.schema';
import { access } from '../../http/authorize';
import { tooManyRequests } from '../../http/errors';
import { validQuery, validate } from '../../http/validate';
import { answerQuestion, askQuestion, listQuestions, setHidden } from './questions.service';

/** Questions per account, and per address (a workshop may share one), in ten minutes. */
export const QUESTION_LIMITS = { windowMs: 10 * 60_000, perAccount: 5, perAddress: 30 } as const;

function askLimiters() {
  const refuse = (message: string) => (_req: Request, _res: unknown, next: (err: unknown) => void) => next(tooManyRequests(message));
  return [
    rateLimit({
      windowMs: QUESTION_LIMITS.windowMs,
      limit: QUESTION_LIMITS.perAccount,
      keyGenerator: (req) => `account:${req.user!.id}`,
      standardHeaders: 'draft-8',
      legacyHeaders: false,
      handler: refuse(`You have asked ${QUESTION_LIMITS.perAccount} questions in the last ten minutes. Wait a little before asking another.`),
    }),
    rateLimit({
      windowMs: QUESTION_LIMITS.windowMs,
      limit: QUESTION_LIMITS.perAddress,
      standardHeaders: 'draft-8',
      legacyHeaders: false,
      handler: refuse('Too many questions from this address in the last ten minutes. Wait a little before asking another.'),
    }),
  ];
}

/** Under /api/public/stories: the questions on a published story. Limits are per app. */
export function storyQuestionsRouter() {
  const router = Router();
  router.get('/:storyId/questions', access.public, validate({ params: publicStoryParamsSchema, query: questionListQuerySchema }), async (req, res) => {
    res.set('Cache-Control', 'private, no-cache');
    res.json(await listQuestions(Number(req.params.storyId), req.user, validQuery<{ after?: number; limit: number }>(res)));
  });
  router.post('/:storyId/questions', access.signedIn, ...askLimiters(), validate({ params: publicStoryParamsSchema, body: questionInputSchema }), async (req, res) => {
    res.status(201).json({ question: await askQuestion(Number(req.params.storyId), req.user!, (req.body as { body: string }).body) });
  });
  return router;
}

/** Under /api/questions: the builder's answer, and moderators hiding and showing again. */
export function questionsRouter() {
  const router = Router();
  const one = questionIdParamsSchema;
  router.post('/:questionId/answer', access.signedIn, validate({ params: one, body: answerInputSchema }), async (req, res) => {
    res.json({ question: await answerQuestion(Number(req.params.questionId), req.user!, (req.body as { body: string }).body) });
  });
  router.post('/:questionId/hide', access.role('moderator'), validate({ params: one, body: hideInputSchema }), async (req, res) => {
    res.json({ question: await setHidden(Number(req.params.questionId), req.user!, true, (req.body as { reason: string }).reason) });
  });
  router.post('/:questionId/unhide', access.role('moderator'), validate({ params: one }), async (req, res) => {
    res.json({ question: await setHidden(Number(req.params.questionId), req.user!, false) });
  });
  return router;
}
