import { Router } from 'express';
import type { Logger } from 'pino';
import { clipIdParamsSchema } from '@shared/clips/clip.schema';
import { publicClipParamsSchema } from '@shared/public/public-story.schema';
import { proposalParamsSchema, type ClipProposalsResponse, type ClipWordsResponse, type ListeningState } from '@shared/speech/speech.schema';
import type { Config } from '../../config';
import { access } from '../../http/authorize';
import { notFound } from '../../http/errors';
import { validate } from '../../http/validate';
import type { Queue } from '../../jobs/queue';
import type { Clip } from '../clips/clip.model';
import { clipForOwner, clipForViewer } from '../clips/clips.service';
import { publicClipScope } from '../public/public.service';
import { captionsVtt } from './captions';
import { enqueueListen } from './listen.job';
import { recognizerFromConfig } from './recognizer';
import { dismissProposal, listeningOf, proposalsForClip, undismissProposal, wordsForReaders } from './speech.service';

export interface SpeechRouteDeps {
  config: Config;
  queue: Queue | null;
  logger: Logger;
}

const clipId = (req: { params: Record<string, unknown> }) => Number(req.params.clipId);

/**
 * Where listening to the clip stands. A ready clip nobody has listened to yet (it was ready before
 * this feature, or was found 'unavailable' and a recognizer is here now) is queued on the way.
 */
async function stateOf(deps: SpeechRouteDeps, clip: Clip): Promise<ListeningState> {
  const state = (await listeningOf(clip.id))?.state ?? 'pending';
  const waiting = state === 'pending' || (state === 'unavailable' && deps.config.speech.enabled && recognizerFromConfig(deps.config.speech).unavailableBecause() === null);
  if (waiting && clip.status === 'ready' && deps.queue) {
    await enqueueListen(deps.queue, deps.config, clip.id, clip.probe?.durationS).catch((err: unknown) =>
      deps.logger.warn({ err, clipId: clip.id }, 'listening to the clip not queued'),
    );
  }
  return state;
}

/**
 * Routes under /api/clips/:clipId: the words heard in a clip, its captions and the readings they
 * propose; its builder dismisses a proposal (and brings it back) there too.
 */
export function clipSpeechRouter(deps: SpeechRouteDeps) {
  const router = Router();
  const one = validate({ params: clipIdParamsSchema });

  router.get('/:clipId/words', access.signedIn, one, async (req, res) => {
    const clip = await clipForViewer(clipId(req), req.user);
    const body: ClipWordsResponse = { state: await stateOf(deps, clip), words: await wordsForReaders(clip.id) };
    res.set('Cache-Control', 'private, no-cache');
    res.json(body);
  });

  router.get('/:clipId/captions.vtt', access.signedIn, one, async (req, res) => {
    const clip = await clipForViewer(clipId(req), req.user);
    await stateOf(deps, clip);
    res.set('Cache-Control', 'private, no-cache');
    res.type('text/vtt; charset=utf-8').send(captionsVtt(await wordsForReaders(clip.id)));
  });

  router.get('/:clipId/proposals', access.signedIn, one, async (req, res) => {
    const clip = await clipForViewer(clipId(req), req.user);
    const [state, items] = await Promise.all([stateOf(deps, clip), proposalsForClip(clip)]);
    const body: ClipProposalsResponse = { state, items };
    res.set('Cache-Control', 'private, no-cache');
    res.json(body);
  });

  // Setting a proposal aside is the builder's choice about their own clip: only the build's
  // builder (an admin passes the role check and is refused by buildForOwner; others' clips 404).
  const proposal = validate({ params: proposalParamsSchema });
  router.post('/:clipId/proposals/:proposalId/dismiss', access.role('builder'), proposal, async (req, res) => {
    const clip = await clipForOwner(clipId(req), req.user);
    await dismissProposal(clip, req.user!, String(req.params.proposalId));
    res.status(204).end();
  });
  router.delete('/:clipId/proposals/:proposalId/dismiss', access.role('builder'), proposal, async (req, res) => {
    const clip = await clipForOwner(clipId(req), req.user);
    await undismissProposal(clip, String(req.params.proposalId));
    res.status(204).end();
  });

  return router;
}

/**
 * Routes under /api/public/clips/:clipId: a cited clip's captions, for readers. The same rule as
 * its video: only a clip whose footage a current publication cites; anything else is not found.
 */
export function publicSpeechRouter() {
  const router = Router();
  router.get('/:clipId/captions.vtt', access.public, validate({ params: publicClipParamsSchema }), async (req, res) => {
    const scope = await publicClipScope(clipId(req));
    if (!scope.full) throw notFound('There is no public clip with that id.');
    res.set('Cache-Control', 'public, max-age=60');
    res.type('text/vtt; charset=utf-8').send(captionsVtt(await wordsForReaders(scope.clip.id)));
  });
  return router;
}
