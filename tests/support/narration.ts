import { execFile } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { promisify } from 'node:util';
import { clipSchema } from '@shared/clips/clip.schema';
import { clipTranscriptResponseSchema, type ClipTranscriptResponse } from '@shared/speech/speech.schema';
import { mediaBinaries } from '../../server/features/clips/media/binaries';
import { readWav, writeWav } from '../../scripts/lib/wav';

/*
 * Clips with speech in them, for the listening tests: festival's US English voice (Debian's
 * festival and festvox-us-slt-hts, installed by `npm test`, scripts/lib/speech.ts) says each
 * phrase, the phrases are laid on silence at their times, and ffmpeg muxes the sound under its
 * test pattern as an MP4 (H.264 + AAC).
 */

const run = promisify(execFile);
const TEXT2WAVE = '/usr/bin/text2wave';
const VOICE = '(voice_cmu_us_slt_arctic_hts)';

/** One phrase said at `atS` seconds from the start of the clip. */
export interface NarratedPhrase {
  atS: number;
  text: string;
}

/** A 16-bit mono WAV of `seconds` of silence with each phrase's samples placed at its time. */
export function writeNarration(file: string, seconds: number, phrases: { atS: number; wav: string }[]) {
  const parts = phrases.map((p) => ({ ...p, ...readWav(p.wav) }));
  const rate = parts[0]!.rate;
  const data = new Int16Array(Math.round(seconds * rate));
  for (const p of parts) {
    if (p.rate !== rate) throw new Error('the phrases differ in sample rate');
    const at = Math.round(p.atS * rate);
    if (at + p.samples.length > data.length) throw new Error(`the phrase at ${p.atS} s runs past the end of the ${seconds} s clip`);
    data.set(p.samples, at);
  }
  writeWav(file, rate, data);
}

/** Festival's US English voice saying `text`, as a 16 kHz WAV in `dir`. */
export async function say(text: string, name: string, dir: string): Promise<string> {
  if (!fs.existsSync(TEXT2WAVE)) throw new Error(`${TEXT2WAVE} is missing: npm test installs festival and festvox-us-slt-hts (scripts/lib/speech.ts)`);
  const txt = path.join(dir, `${name}.txt`);
  const wav = path.join(dir, `${name}.wav`);
  fs.writeFileSync(txt, `${text}\n`);
  await run(TEXT2WAVE, ['-F', '16000', '-eval', VOICE, '-o', wav, txt]);
  return wav;
}

/**
 * A `seconds`-long test-pattern MP4 (H.264 + AAC) whose sound says each phrase at its time;
 * its path (`<dir>/<name>.mp4`).
 */
export async function makeNarratedClip(options: { dir: string; seconds: number; phrases: readonly NarratedPhrase[]; name?: string }): Promise<string> {
  const { dir, seconds, phrases } = options;
  const name = options.name ?? 'narrated';
  const narration = path.join(dir, `${name}.wav`);
  const said: { atS: number; wav: string }[] = [];
  for (const [i, p] of phrases.entries()) said.push({ atS: p.atS, wav: await say(p.text, `${name}-phrase-${i}`, dir) });
  writeNarration(narration, seconds, said);
  const file = path.join(dir, `${name}.mp4`);
  await run(mediaBinaries().ffmpeg, [
    '-v', 'error', '-y',
    '-f', 'lavfi', '-i', `testsrc=size=320x240:rate=30:duration=${seconds}`,
    '-i', narration,
    '-map', '0:v', '-map', '1:a',
    '-c:v', 'libx264', '-preset', 'veryfast', '-pix_fmt', 'yuv420p',
    '-c:a', 'aac', '-ar', '48000', '-ac', '2',
    '-t', String(seconds), '-movflags', '+faststart', '-f', 'mp4', file,
  ]);
  return file;
}

/** What `waitForListening` needs of a signed-in supertest agent. */
interface Agent {
  get(url: string): { expect(status: number): PromiseLike<{ body: unknown }> };
}

/**
 * Waits until the clip is processed and listened to (or listening ended otherwise: failed,
 * unavailable); the words as the API gives them.
 */
export async function waitForListening(agent: Agent, clipId: number, ms = 120_000): Promise<ClipTranscriptResponse> {
  const end = Date.now() + ms;
  for (;;) {
    const clip = clipSchema.parse(((await agent.get(`/api/clips/${clipId}`).expect(200)).body as { clip: unknown }).clip);
    if (clip.status === 'failed') throw new Error(`clip ${clipId} failed: ${clip.failureReason}`);
    const words = clipTranscriptResponseSchema.parse((await agent.get(`/api/clips/${clipId}/transcript`).expect(200)).body);
    if (clip.status === 'ready' && !['queued', 'running'].includes(words.state)) return words;
    if (Date.now() > end) throw new Error(`clip ${clipId} is ${clip.status}, listening ${words.state}, after ${ms} ms`);
    await new Promise((r) => setTimeout(r, 250));
  }
}
