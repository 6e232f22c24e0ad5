import { Router } from 'express';
import type { Logger } from 'pino';
import { clipIdParamsSchema } from '@shared/clips/clip.schema';
import { publicClipParamsSchema } from '@shared/public/public-story.schema';
import { quantityOf } from '@shared/measure/quantities';
import {
  captionCorrectionBodySchema,
  captionCorrectionParamsSchema,
  displayRegionBodySchema,
  evidenceStateOf,
  suggestionParamsSchema,
  type CaptionCorrectionListResponse,
  type CaptionCorrectionResponse,
  type ClipSuggestionsResponse,
  type ClipTranscriptResponse,
  type EvidenceState,
} from '@shared/speech/speech.schema';
import type { Config } from '../../config';
import { access } from '../../http/authorize';
import { notFound } from '../../http/errors';
import { input } from '../../http/validate';
import type { Queue } from '../../jobs/queue';
import type { Clip } from '../clips/clip.model';
import { clipForOwner, clipForViewer } from '../clips/clips.service';
import { publicClipScope } from '../public/public.service';
import { captionsVtt } from './captions';
import { correctionDto, createCorrection, listCorrections, removeCorrection } from './corrections.service';
import { enqueueDisplayRead } from './display.job';
import { displayRegionOf, regionDto, removeDisplayRegion, setDisplayRegion, type DisplayState } from './display.service';
import { enqueueListen } from './listen.job';
import { recognizerFromConfig } from './recognizer';
import { dismissSuggestion, listeningOf, spokenFigureOptions, suggestionsForClip, undismissSuggestion, wordsForReaders } from './speech.service';

export interface SpeechRouteDeps {
  config: Config;
  queue: Queue | null;
  logger: Logger;
}


/**
 * Where listening to the clip stands. A ready clip nobody has listened to yet (it was ready before
 * this feature, or was found 'unavailable' and a recognizer is here now) is queued on the way.
 */
async function listeningState(deps: SpeechRouteDeps, clip: Clip): Promise<EvidenceState> {
  const state = (await listeningOf(clip.id))?.state ?? 'pending';
  const waiting = state === 'pending' || (state === 'unavailable' && deps.config.speech.enabled && recognizerFromConfig(deps.config.speech).unavailableBecause() === null);
  if (waiting && clip.status === 'ready' && deps.queue) {
    await enqueueListen(deps.queue, deps.config, clip.id, clip.probe?.durationS).catch((err: unknown) =>
      deps.logger.warn({ err, clipId: clip.id }, 'listening to the clip not queued'),
    );
  }
  return evidenceStateOf(state);
}

const displayStates: Record<DisplayState, EvidenceState> = { pending: 'queued', reading: 'running', ready: 'done', failed: 'failed', unavailable: 'off' };

/** Where reading the clip's display stands (null: no region set); a pending one of a ready clip is queued on the way. */
async function displayState(deps: SpeechRouteDeps, clip: Clip, state: DisplayState | null): Promise<EvidenceState | null> {
  if (state === null) return null;
  if (state === 'pending' && clip.status === 'ready' && deps.queue) {
    await enqueueDisplayRead(deps.queue, deps.config, clip.id, clip.probe?.durationS).catch((err: unknown) =>
      deps.logger.warn({ err, clipId: clip.id }, 'reading the clip display not queued'),
    );
  }
  return displayStates[state];
}

/**
 * The suggestions' state from listening's and the display's: under way while either is, then
 * failed if either failed, `done` when each asked for has finished (a display region set makes
 * it wait for that reading too), `off` only when nothing can be read at all.
 */
export function combinedState(listening: EvidenceState, display: EvidenceState | null): EvidenceState {
  const states = display === null ? [listening] : [listening, display];
  for (const s of ['running', 'queued', 'failed', 'done'] as const) if (states.includes(s)) return s;
  return 'off';
}

/**
 * Routes under /api/clips/:clipId: the words heard in a clip, its captions, the readings its
 * sound and display suggest, the region of its picture where a display is read, and its
 * builder's caption corrections. Anyone who may see the clip reads them; its builder dismisses a
 * suggestion (and brings it back), sets the display region and corrects the captions.
 */
export function clipSpeechRouter(deps: SpeechRouteDeps) {
  const router = Router();
  const one = { params: clipIdParamsSchema };

  router.get('/:clipId/transcript', access.signedIn, ...input(one, async ({ params }, req, res) => {
    const clip = await clipForViewer(params.clipId, req.user);
    const words = (await wordsForReaders(clip.id)).map(({ word, ...w }) => ({ startMs: w.startMs, endMs: w.endMs, text: word, confidence: w.confidence }));
    const body: ClipTranscriptResponse = { state: await listeningState(deps, clip), words };
    res.set('Cache-Control', 'private, no-cache');
    res.json(body);
  }));

  router.get('/:clipId/captions.vtt', access.signedIn, ...input(one, async ({ params }, req, res) => {
    const clip = await clipForViewer(params.clipId, req.user);
    await listeningState(deps, clip);
    res.set('Cache-Control', 'private, no-cache');
    res.type('text/vtt; charset=utf-8').send(captionsVtt(await wordsForReaders(clip.id)));
  }));

  router.get('/:clipId/suggestions', access.signedIn, ...input(one, async ({ params }, req, res) => {
    const clip = await clipForViewer(params.clipId, req.user);
    const region = await displayRegionOf(clip.id);
    const [listening, display, suggestions] = await Promise.all([
      listeningState(deps, clip),
      displayState(deps, clip, (region?.state as DisplayState | undefined) ?? null),
      suggestionsForClip(clip),
    ]);
    const body: ClipSuggestionsResponse = {
      state: combinedState(listening, display),
      suggestions,
      displayRegion: region && display ? { ...regionDto(region), state: display } : null,
    };
    res.set('Cache-Control', 'private, no-cache');
    res.json(body);
  }));

  // Setting a suggestion aside, and where the display is, are the builder's choices about their
  // own clip: only the build's builder (an admin passes the role check and is refused by
  // clipForOwner; others' clips are not found).
  const suggestion = { params: suggestionParamsSchema };
  router.post('/:clipId/suggestions/:id/dismiss', access.role('builder'), ...input(suggestion, async ({ params }, req, res) => {
    const clip = await clipForOwner(params.clipId, req.user);
    await dismissSuggestion(clip, req.user!, params.id);
    res.status(204).end();
  }));
  router.delete('/:clipId/suggestions/:id/dismiss', access.role('builder'), ...input(suggestion, async ({ params }, req, res) => {
    const clip = await clipForOwner(params.clipId, req.user);
    await undismissSuggestion(clip, params.id);
    res.status(204).end();
  }));

  router.put('/:clipId/display-region', access.role('builder'), ...input({ params: clipIdParamsSchema, body: displayRegionBodySchema }, async ({ params, body }, req, res) => {
    const clip = await clipForOwner(params.clipId, req.user);
    const { unit: given, ...region } = body;
    const unit = given ?? (await usualUnit(clip));
    await setDisplayRegion(clip, req.user!, region, unit);
    if (clip.status === 'ready' && deps.queue) await enqueueDisplayRead(deps.queue, deps.config, clip.id, clip.probe?.durationS);
    res.status(204).end();
  }));
  router.delete('/:clipId/display-region', access.role('builder'), ...input(one, async ({ params }, req, res) => {
    const clip = await clipForOwner(params.clipId, req.user);
    await removeDisplayRegion(clip);
    res.status(204).end();
  }));

  // Caption corrections: the builder's own words for a span of the clip, used wherever its words
  // are read. Anyone who may see the clip lists them; only the build's builder makes or removes
  // one (as for dismissing a suggestion).
  router.get('/:clipId/caption-corrections', access.signedIn, ...input(one, async ({ params }, req, res) => {
    const clip = await clipForViewer(params.clipId, req.user);
    const body: CaptionCorrectionListResponse = { items: (await listCorrections(clip.id)).map(correctionDto) };
    res.set('Cache-Control', 'private, no-cache');
    res.json(body);
  }));
  router.post(
    '/:clipId/caption-corrections',
    access.role('builder'),
    ...input({ params: clipIdParamsSchema, body: captionCorrectionBodySchema }, async ({ params, body }, req, res) => {
      const clip = await clipForOwner(params.clipId, req.user);
      const correction = await createCorrection(clip, req.user!, body);
      const answer: CaptionCorrectionResponse = { correction: correctionDto(correction) };
      res.status(201).json(answer);
    }),
  );
  router.delete('/:clipId/caption-corrections/:correctionId', access.role('builder'), ...input({ params: captionCorrectionParamsSchema }, async ({ params }, req, res) => {
    const clip = await clipForOwner(params.clipId, req.user);
    await removeCorrection(clip, params.correctionId);
    res.status(204).end();
  }));

  return router;
}

/** The unit a display is read in when the builder names none: their usual one, else their first length unit, else inches. */
async function usualUnit(clip: Clip) {
  const opts = await spokenFigureOptions(clip);
  return opts.defaultUnit ?? opts.units?.find((u) => quantityOf(u) === 'length') ?? 'in';
}

/**
 * Routes under /api/public/clips/:clipId: a cited clip's captions, for readers. The same rule as
 * its video: only a clip whose footage a current publication cites; anything else is not found.
 */
export function publicSpeechRouter() {
  const router = Router();
  router.get('/:clipId/captions.vtt', access.public, ...input({ params: publicClipParamsSchema }, async ({ params }, _req, res) => {
    const scope = await publicClipScope(params.clipId);
    if (!scope.full) throw notFound('There is no public clip with that id.');
    res.set('Cache-Control', 'public, max-age=60');
    res.type('text/vtt; charset=utf-8').send(captionsVtt(await wordsForReaders(scope.clip.id)));
  }));
  return router;
}
