import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { WebVTTParser, type Entity } from 'webvtt-parser';
import htmlEntities from 'webvtt-parser/html-entities.json';
import { clipSchema } from '@shared/clips/clip.schema';
import { clipSuggestionsResponseSchema, type ClipTranscriptResponse } from '@shared/speech/speech.schema';
import { Fraction, fractionToExactText } from '@shared/measure/exact';
import { convertExact } from '@shared/measure/quantities';
import { makeTestClip } from '../../support/clips';
import { makeNarratedClip, waitForListening } from '../../support/narration';
import { csrfToken, signIn, startTestApp, type TestApp } from '../../support/test-app';

/*
 * Listening end to end: a clip narrated by festival's US English voice (tests/support/narration.ts)
 * is uploaded through the API; once processed, the worker takes its sound out with ffmpeg and
 * pocketsphinx (Debian's, installed by `npm test`) hears it. Nothing here is skipped when the recognizer is missing: the
 * product's own bootstrap installs it, so its absence is a failure.
 *
 * "five hundred sixty four and two tenths" is 564.2 thou = 0.5642 in: thou and tenths as the
 * trade says them, common practice (no published source); 1 in = 1000 thou by NIST SP 811 B.8.
 */

/** Where each phrase starts in the clip, seconds. */
const PHRASE_AT = { opening: 1, figure: 4 } as const;
const CLIP_SECONDS = 8;

let t: TestApp;
let work: string;
let builder: Awaited<ReturnType<typeof signIn>>;
let token: string;
let buildId: number;

/** An 8 s test-pattern MP4 (H.264 + AAC) whose sound says the two phrases at their times. */
function makeFigureClip(): Promise<string> {
  return makeNarratedClip({
    dir: work,
    seconds: CLIP_SECONDS,
    phrases: [
      { atS: PHRASE_AT.opening, text: 'the depth reads' },
      { atS: PHRASE_AT.figure, text: 'five hundred sixty four and two tenths' },
    ],
  });
}

async function upload(file: string, agent = builder, tok = token, build = buildId): Promise<number> {
  const res = await agent.post(`/api/builds/${build}/clips`).set('x-csrf-token', tok).attach('file', file, path.basename(file)).expect(201);
  return clipSchema.parse(res.body.clip).id;
}

function parseVtt(text: string) {
  return new WebVTTParser(htmlEntities as Record<Entity, string>).parse(text, 'subtitles');
}

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-listen-'));
  t = await startTestApp({}, { jobs: true });
  builder = await signIn(t, 'demo-builder');
  token = await csrfToken(builder);
  const res = await builder
    .post('/api/builds')
    .set('x-csrf-token', token)
    .send({ title: 'Test listening: bore depth read aloud', subject: 'invented test engine', parts: [{ name: 'Block', serial: 'TL-0001' }] })
    .expect(201);
  buildId = res.body.build.id;
}, 120_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('a clip read aloud', () => {
  let clipId: number;
  let heard: ClipTranscriptResponse;

  beforeAll(async () => {
    clipId = await upload(await makeFigureClip());
    const started = Date.now();
    heard = await waitForListening(builder, clipId);
    // For the report: upload to words, on this machine.
    console.info(`[listen test] clip ${clipId} ready and listened to in ${Date.now() - started} ms: ${heard.words.map((w) => w.text).join(' ')}`);
  }, 180_000);

  it('is listened to by the recognizer the bootstrap installs (never "unavailable" here)', () => {
    expect(heard.state, 'pocketsphinx must be installed: npm test installs it (scripts/lib/speech.ts)').toBe('done');
    expect(heard.words.length).toBeGreaterThan(3);
  });

  it('has the figure’s words near when they were said, without the recognizer’s markers', () => {
    const sixty = heard.words.find((w) => w.text === 'sixty');
    const four = heard.words.find((w) => w.text === 'four' && w.startMs >= (sixty?.startMs ?? 0));
    expect(sixty, JSON.stringify(heard.words)).toBeDefined();
    expect(four, JSON.stringify(heard.words)).toBeDefined();
    // The figure's phrase starts at 4 s and lasts about 2.6 s ("sixty" is its third word).
    for (const w of [sixty!, four!]) {
      expect(w.startMs).toBeGreaterThanOrEqual(PHRASE_AT.figure * 1000);
      expect(w.endMs).toBeLessThanOrEqual(PHRASE_AT.figure * 1000 + 3000);
      expect(w.endMs).toBeGreaterThan(w.startMs);
    }
    expect(four!.startMs).toBeGreaterThanOrEqual(sixty!.endMs);
    for (const w of heard.words) {
      expect(w.text).not.toMatch(/^<.*>$|\(\d+\)$/);
      expect(w.confidence).toBeGreaterThanOrEqual(0);
      expect(w.confidence).toBeLessThanOrEqual(1);
    }
  });

  it('serves captions as WebVTT that the W3C parser reads, with the figure in a cue at its time', async () => {
    const res = await builder.get(`/api/clips/${clipId}/captions.vtt`).expect(200);
    expect(res.headers['content-type']).toMatch(/^text\/vtt/);
    const { cues, errors } = parseVtt(res.text);
    expect(errors).toEqual([]);
    const cue = cues.find((c) => /sixty four/.test(c.text));
    expect(cue, res.text).toBeDefined();
    expect(cue!.startTime).toBeGreaterThanOrEqual(PHRASE_AT.figure - 0.5);
    expect(cue!.endTime).toBeLessThanOrEqual(PHRASE_AT.figure + 3.5);
  });

  it('proposes 564.2 thou (0.5642 in) within 1.5 s of when it was said', async () => {
    const body = clipSuggestionsResponseSchema.parse((await builder.get(`/api/clips/${clipId}/suggestions`).expect(200)).body);
    expect(body.state).toBe('done');
    const figure = body.suggestions.find((p) => {
      if (p.kind !== 'direct' || (p.unit !== 'thou' && p.unit !== 'in')) return false;
      return fractionToExactText(convertExact(new Fraction(p.value), p.unit, 'in')) === '0.5642';
    });
    expect(figure, JSON.stringify(body.suggestions)).toBeDefined();
    expect(Math.abs(figure!.atMs - PHRASE_AT.figure * 1000)).toBeLessThanOrEqual(1500);
    expect(figure!.text).toContain('sixty four');
    // The same words give the same ids.
    const again = clipSuggestionsResponseSchema.parse((await builder.get(`/api/clips/${clipId}/suggestions`).expect(200)).body);
    expect(again.suggestions.map((p) => p.id)).toEqual(body.suggestions.map((p) => p.id));
  });

  it('is not captioned for readers while no publication cites it', async () => {
    const res = await request(t.server).get(`/api/public/clips/${clipId}/captions.vtt`).expect(404);
    expect(res.body.error.code).toBe('not_found');
  });
});

describe('a clip without sound', () => {
  it('is listened to at once: ready, no words, captions with no cues', async () => {
    const clipId = await upload(await makeTestClip({ format: 'mp4-h264', dir: work, seconds: 2, audio: false, name: 'silent' }));
    const heard = await waitForListening(builder, clipId);
    expect(heard).toEqual({ state: 'done', words: [] });
    const vtt = await builder.get(`/api/clips/${clipId}/captions.vtt`).expect(200);
    expect(vtt.text).toBe('WEBVTT\n');
    expect(clipSuggestionsResponseSchema.parse((await builder.get(`/api/clips/${clipId}/suggestions`).expect(200)).body)).toEqual({ state: 'done', suggestions: [], displayRegion: null });
  }, 120_000);
});

describe('another recognizer plugged in with SPEECH_COMMAND', () => {
  /** An app whose recognizer is `command`; its own builder session and build. */
  async function appWith(command: string) {
    const app = await startTestApp({ SPEECH_COMMAND: command }, { jobs: true });
    const agent = await signIn(app, 'demo-builder');
    const tok = await csrfToken(agent);
    const res = await agent.post('/api/builds').set('x-csrf-token', tok).send({ title: 'Test listening: another recognizer', parts: [{ name: 'Block' }] }).expect(201);
    return { app, agent, tok, build: res.body.build.id as number };
  }

  it('is run with the clip’s sound as a WAV file, and the JSON words it prints are stored', async () => {
    // A stand-in recognizer: says what the file it was given starts with, then "three thou".
    const script = path.join(work, 'fake-asr.sh');
    fs.writeFileSync(
      script,
      [
        '#!/bin/sh',
        'test "$1" = "--json" || exit 2',
        'magic=$(head -c 4 "$2")',
        'printf \'{"words":[{"word":"%s","start":0.5,"end":0.9,"confidence":0.8},{"word":"three","start":1.0,"end":1.2},{"word":"thou","start":1.25,"end":1.5,"confidence":0.9}]}\' "$magic"',
        '',
      ].join('\n'),
      { mode: 0o755 },
    );
    const x = await appWith(`"${script}" --json {wav}`);
    try {
      const clipId = await upload(await makeTestClip({ format: 'mp4-h264', dir: work, seconds: 2, name: 'for-command' }), x.agent, x.tok, x.build);
      const heard = await waitForListening(x.agent, clipId);
      expect(heard).toEqual({
        state: 'done',
        words: [
          { text: 'RIFF', startMs: 500, endMs: 900, confidence: 0.8 },
          { text: 'three', startMs: 1000, endMs: 1200, confidence: 1 },
          { text: 'thou', startMs: 1250, endMs: 1500, confidence: 0.9 },
        ],
      });
      const proposals = clipSuggestionsResponseSchema.parse((await x.agent.get(`/api/clips/${clipId}/suggestions`).expect(200)).body);
      expect(proposals.suggestions).toMatchObject([{ id: '1000-0', kind: 'direct', value: '3', unit: 'thou', atMs: 1000, endMs: 1500, source: 'speech', text: 'three thou' }]);
    } finally {
      await x.app.close();
    }
  }, 120_000);

  it('reports itself unavailable when its program is not installed, and the clip is ready all the same', async () => {
    const x = await appWith('/nonexistent/benchproof-asr --json {wav}');
    try {
      const clipId = await upload(await makeTestClip({ format: 'mp4-h264', dir: work, seconds: 2, name: 'no-recognizer' }), x.agent, x.tok, x.build);
      expect(await waitForListening(x.agent, clipId)).toEqual({ state: 'off', words: [] });
      expect((await x.agent.get(`/api/clips/${clipId}/captions.vtt`).expect(200)).text).toBe('WEBVTT\n');
    } finally {
      await x.app.close();
    }
  }, 120_000);
});
