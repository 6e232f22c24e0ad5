import { Router, type RequestHandler } from 'express';
import { partParamsSchema, sheetQuerySchema, verifyQuerySchema, type VerifyQuery } from '@shared/public/sheet.schema';
import type { Config } from '../../config';
import { access } from '../../http/authorize';
import { AppError } from '../../http/errors';
import { limiter } from '../../http/rate-limit';
import { validQuery, validate } from '../../http/validate';
import { sheetPdf } from './sheet.pdf';
import { partSheet, verifySheet } from './sheets.service';

const storyFilter = (res: { locals: Record<string, unknown> }) => {
  const story = validQuery<{ story?: number }>(res).story;
  return story === undefined ? undefined : [story];
};

const AGAIN = 'scan the code again or open the part’s current sheet.';

/**
 * The story and revision numbers a printed sheet's QR code carries. Whoever holds a sheet reads
 * this message, so it says what is wrong with the address in their words; `details` keep the
 * fields for programs.
 */
export const verifyQueryMessages = {
  story: `This sheet’s story number is missing or not a number; ${AGAIN}`,
  rev: `This sheet’s revision number is missing or not a number; ${AGAIN}`,
  pairs: `This sheet’s address does not give one revision number for each story; ${AGAIN}`,
} as const;

const printedEntries: RequestHandler = (req, res, next) => {
  const parsed = verifyQuerySchema.safeParse(req.query);
  if (parsed.success) {
    res.locals.query = parsed.data;
    next();
    return;
  }
  const issues = parsed.error.issues;
  const details = issues.map((i) => ({ path: i.path.map(String).join('.'), message: i.message }));
  const on = (field: string) => issues.some((i) => i.path[0] === field && i.code !== 'custom');
  const message = on('story') ? verifyQueryMessages.story : on('rev') ? verifyQueryMessages.rev : verifyQueryMessages.pairs;
  throw new AppError(400, 'invalid_request', message, details);
};

/** Under /api/public: a part's inspection sheet as JSON and its verification. */
export function sheetsApiRouter(config: Pick<Config, 'publicUrl'>) {
  const router = Router();
  router.get('/parts/:partId/sheet', access.public, validate({ params: partParamsSchema, query: sheetQuerySchema }), async (req, res) => {
    res.set('Cache-Control', 'public, max-age=60');
    res.json(await partSheet(Number(req.params.partId), config.publicUrl, storyFilter(res)));
  });
  router.get('/verify/parts/:partId', access.public, validate({ params: partParamsSchema }), printedEntries, async (req, res) => {
    // Read now, every time: the point is to see the database, not a cached copy.
    res.set('Cache-Control', 'no-store');
    const q = validQuery<VerifyQuery>(res);
    res.json(await verifySheet(Number(req.params.partId), config.publicUrl, { storyIds: q.story, revisions: q.rev }));
  });
  return router;
}

/** Under /sheets: the printable PDF of a part's sheet. */
export function sheetsPdfRouter(config: Pick<Config, 'publicUrl'>) {
  const router = Router();
  // Each PDF is drawn afresh: cap how fast one address can ask for them.
  const slow = limiter({ windowMs: 60_000, limit: 30, message: 'Too many sheets asked for from here. Wait a minute and try again.' });
  router.get('/parts/:partId.pdf', access.public, slow, validate({ params: partParamsSchema, query: sheetQuerySchema }), async (req, res) => {
    const sheet = await partSheet(Number(req.params.partId), config.publicUrl, storyFilter(res));
    const pdf = await sheetPdf(sheet, { generatedAt: new Date() });
    const name = `inspection-sheet-${(sheet.part.serial || `part-${sheet.part.id}`).replace(/[^A-Za-z0-9._-]+/g, '-')}.pdf`;
    res.set('Cache-Control', 'public, max-age=60');
    res.set('Content-Disposition', `inline; filename="${name}"`);
    res.type('application/pdf').send(pdf);
  });
  return router;
}
