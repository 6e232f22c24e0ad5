import { execFile } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { promisify } from 'node:util';
import { clipSchema } from '@shared/clips/clip.schema';
import { clipTranscriptResponseSchema, type ClipTranscriptResponse } from '@shared/speech/speech.schema';
import { mediaBinaries } from '../../server/features/clips/media/binaries';

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

/** The 16-bit mono samples of a RIFF WAV file and its sample rate (the data chunk found by walking the chunks). */
export function readWav(file: string): { rate: number; samples: Buffer } {
  const buf = fs.readFileSync(file);
  if (buf.toString('latin1', 0, 4) !== 'RIFF' || buf.toString('latin1', 8, 12) !== 'WAVE') throw new Error(`${file} is not a WAV file`);
  let rate = 0;
  for (let at = 12; at + 8 <= buf.length; ) {
    const id = buf.toString('latin1', at, at + 4);
    const size = buf.readUInt32LE(at + 4);
    if (id === 'fmt ') {
      const channels = buf.readUInt16LE(at + 10);
      const bits = buf.readUInt16LE(at + 22);
      if (channels !== 1 || bits !== 16) throw new Error(`${file}: expected 16-bit mono, got ${bits}-bit × ${channels}`);
      rate = buf.readUInt32LE(at + 12);
    }
    if (id === 'data') return { rate, samples: buf.subarray(at + 8, at + 8 + size) };
    at += 8 + size + (size % 2);
  }
  throw new Error(`${file} has no data chunk`);
}

/** A 16-bit mono WAV of `seconds` of silence with each phrase's samples placed at its time. */
export function writeNarration(file: string, seconds: number, phrases: { atS: number; wav: string }[]) {
  const parts = phrases.map((p) => ({ ...p, ...readWav(p.wav) }));
  const rate = parts[0]!.rate;
  const data = Buffer.alloc(Math.round(seconds * rate) * 2);
  for (const p of parts) {
    if (p.rate !== rate) throw new Error('the phrases differ in sample rate');
    const at = Math.round(p.atS * rate) * 2;
    if (at + p.samples.length > data.length) throw new Error(`the phrase at ${p.atS} s runs past the end of the ${seconds} s clip`);
    p.samples.copy(data, at);
  }
  const header = Buffer.alloc(44);
  header.write('RIFF', 0, 'latin1');
  header.writeUInt32LE(36 + data.length, 4);
  header.write('WAVEfmt ', 8, 'latin1');
  header.writeUInt32LE(16, 16);
  header.writeUInt16LE(1, 20); // PCM
  header.writeUInt16LE(1, 22); // mono
  header.writeUInt32LE(rate, 24);
  header.writeUInt32LE(rate * 2, 28);
  header.writeUInt16LE(2, 32);
  header.writeUInt16LE(16, 34);
  header.write('data', 36, 'latin1');
  header.writeUInt32LE(data.length, 40);
  fs.writeFileSync(file, Buffer.concat([header, data]));
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
