import crypto from 'node:crypto';
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import path from 'node:path';
import type { DisplayRegion } from '@shared/speech/speech.schema';
import { MediaCommandFailed, runFfmpeg, runMediaTool } from '../clips/media/ffmpeg-run';
import { decodeAllTimeoutS } from '../clips/media/limits';
import { inputFormatArgs } from '../clips/media/sniff';

/*
 * Reading an instrument's display in a clip's picture. ffmpeg crops the builder's region out of
 * frames taken at a steady rate and scales it to a fixed height in grey; consecutive frames that
 * barely differ make a still stretch (the display holds a value); each stretch is read by Debian's
 * `ssocr` (seven-segment digits), with `tesseract` told to see only digits as the fallback for
 * other displays, on up to three of its frames; a stretch whose reading is a number and lasts at
 * least half a second is one value shown.
 */

/** Debian's ssocr (package `ssocr`). */
export const SSOCR_BIN = '/usr/bin/ssocr';
/** Debian's tesseract (package `tesseract-ocr`), the fallback for displays that are not seven segments. */
export const TESSERACT_BIN = '/usr/bin/tesseract';

/** One value the display showed: still frames from `startMs` to `endMs` that read `text` ("0.5642"). */
export interface DisplayReading {
  startMs: number;
  endMs: number;
  text: string;
  /** The share of the frames read in the stretch that read `text`, 0…1. */
  confidence: number;
}

/** The display readers on this machine, or why there are none. */
export function displayReaderStatus(bins = { ssocr: SSOCR_BIN, tesseract: TESSERACT_BIN }): {
  ssocr: boolean;
  tesseract: boolean;
  why: string | null;
} {
  const ssocr = fs.existsSync(bins.ssocr);
  const tesseract = fs.existsSync(bins.tesseract);
  return { ssocr, tesseract, why: ssocr || tesseract ? null : `neither ${bins.ssocr} nor ${bins.tesseract} is installed (Debian ssocr, tesseract-ocr)` };
}

/** A value must stay shown this long to be proposed (the display is not changing under the camera). */
export const MIN_SHOWN_MS = 500;
/** The crop is scaled to this height before reading: ssocr's segment finding wants tens of pixels per digit. */
const READ_HEIGHT = 96;
/** At most this wide after scaling (a very wide, thin region). */
const MAX_READ_WIDTH = 640;
/**
 * Two frames are the same picture when their grey levels differ by less than this on average
 * (0–255): compression noise on a still display stays near 1, a digit changing moves several
 * percent of the pixels by a hundred or more. Our rule of thumb (no published source).
 */
const STILL_MEAN_DIFF = 3;
/**
 * A picture with less spread than this between its dark and light ends (2nd to 98th percentile of
 * grey, 0–255) shows no figure: a blank display or a box off the display is camera noise, which
 * ssocr's thresholding would otherwise turn into segments. Digits on a display spread over a
 * hundred levels. Our rule of thumb (no published source).
 */
const MIN_SPREAD = 32;
/** A value of a display: optional minus, digits with at most one decimal point, at most 12 digits. */
const NUMBER = /^-?(?:\d{1,12}(?:\.\d{0,12})?|\.\d{1,12})$/;

/** How many frames a second are taken: 10, fewer for long clips (at most 3,000 frames), never below 4 (0.5 s needs two). */
export function framesPerSecond(durationS: number): number {
  if (!Number.isFinite(durationS) || durationS <= 300) return 10;
  return Math.max(4, Math.floor(3000 / durationS));
}

/** The crop's size after scaling: READ_HEIGHT high (less for a wide region), even numbers, from the region's shape in the frame. */
export function readSize(region: DisplayRegion, frame: { width: number; height: number }): { width: number; height: number } {
  const aspect = (region.width * frame.width) / (region.height * frame.height);
  let height = READ_HEIGHT;
  let width = Math.round(height * aspect);
  if (width > MAX_READ_WIDTH) {
    width = MAX_READ_WIDTH;
    height = Math.max(16, Math.round(width / aspect));
  }
  const even = (n: number) => Math.max(16, 2 * Math.round(n / 2));
  return { width: even(width), height: even(height) };
}

/** One grey frame: its pixels (PGM P5, 8 bits) and where it is on disk. */
interface Frame {
  index: number;
  file: string;
  pixels: Buffer;
}

/** The pixels of a binary 8-bit PGM written by ffmpeg ("P5\n<w> <h>\n255\n…"). */
export function pgmPixels(data: Buffer): Buffer {
  let at = 0;
  const fields: string[] = [];
  while (fields.length < 4) {
    while (at < data.length && /\s/.test(String.fromCharCode(data[at]!))) at += 1;
    let field = '';
    while (at < data.length && !/\s/.test(String.fromCharCode(data[at]!))) field += String.fromCharCode(data[at++]!);
    if (!field) throw new Error('not a PGM file');
    fields.push(field);
  }
  if (fields[0] !== 'P5' || fields[3] !== '255') throw new Error('not an 8-bit binary PGM file');
  return data.subarray(at + 1);
}

/** Mean absolute difference of two grey pictures of the same size (0–255). */
export function meanDifference(a: Buffer, b: Buffer): number {
  if (a.length !== b.length || a.length === 0) return 255;
  let sum = 0;
  for (let i = 0; i < a.length; i++) sum += Math.abs(a[i]! - b[i]!);
  return sum / a.length;
}

/** What one frame reads as, by ssocr and then tesseract: a number's text, or null. */
export type FrameReader = (file: string, lightOnDark: boolean, signal?: AbortSignal) => Promise<string | null>;

/** A reading's text as a number the product can propose ("0.5642", "-3", ".5" → "0.5"), or null. */
export function numberText(raw: string): string | null {
  const text = raw.replace(/\s+/g, '').replace(/,/g, '.');
  if (!NUMBER.test(text)) return null;
  const [whole, fraction] = text.replace(/^-/, '').split('.');
  const sign = text.startsWith('-') ? '-' : '';
  const digits = `${whole || '0'}${fraction !== undefined && fraction !== '' ? `.${fraction}` : ''}`;
  return `${sign}${digits}`;
}

/** ssocr then (when ssocr reads no number) tesseract on one frame, each under the media tools' limits. */
export function defaultFrameReader(bins = { ssocr: SSOCR_BIN, tesseract: TESSERACT_BIN }): FrameReader {
  const status = displayReaderStatus(bins);
  return async (file, lightOnDark, signal) => {
    if (status.ssocr) {
      const colours = lightOnDark ? ['-f', 'white', '-b', 'black'] : ['-f', 'black', '-b', 'white'];
      try {
        const { stdout } = await runMediaTool(bins.ssocr, ['-d', '-1', '-T', ...colours, file], {
          what: 'read the display',
          signal,
          limits: { timeoutS: 10 },
        });
        const text = numberText(stdout.toString('utf8'));
        if (text !== null) return text;
      } catch (err) {
        // ssocr exits non-zero when it finds no digits, which is an answer, not a failure.
        if (signal?.aborted || !(err instanceof MediaCommandFailed)) throw err;
      }
    }
    if (!status.tesseract) return null;
    try {
      const { stdout } = await runMediaTool(
        bins.tesseract,
        [file, 'stdout', '--psm', '7', '-c', 'tessedit_char_whitelist=0123456789.-'],
        { what: 'read the display', signal, limits: { timeoutS: 30 } },
      );
      return numberText(stdout.toString('utf8'));
    } catch (err) {
      if (signal?.aborted || !(err instanceof MediaCommandFailed)) throw err;
      return null;
    }
  };
}

/** Up to three frames of a stretch to read: its first, middle and last. */
function sampleOf(stretch: Frame[]): Frame[] {
  if (stretch.length <= 3) return stretch;
  return [stretch[0]!, stretch[Math.floor(stretch.length / 2)]!, stretch.at(-1)!];
}

/** Still stretches of consecutive frames, each picture within STILL_MEAN_DIFF of the one before. */
export function stillStretches<F extends { pixels: Buffer }>(frames: readonly F[]): F[][] {
  const stretches: F[][] = [];
  let current: F[] = [];
  for (const frame of frames) {
    const before = current.at(-1);
    if (before && meanDifference(before.pixels, frame.pixels) >= STILL_MEAN_DIFF) {
      stretches.push(current);
      current = [];
    }
    current.push(frame);
  }
  if (current.length) stretches.push(current);
  return stretches;
}

/**
 * The values shown, from stretches already read: a stretch counts when its frames agree on a
 * number and it lasts MIN_SHOWN_MS; neighbouring stretches of the same number (a flicker between
 * them) are one value.
 */
export function valuesShown(
  stretches: readonly { firstIndex: number; lastIndex: number; text: string | null; confidence: number }[],
  fps: number,
): DisplayReading[] {
  const frameMs = 1000 / fps;
  const values: DisplayReading[] = [];
  for (const s of stretches) {
    if (s.text === null) continue;
    const startMs = Math.round(s.firstIndex * frameMs);
    const endMs = Math.round((s.lastIndex + 1) * frameMs);
    const last = values.at(-1);
    if (last && last.text === s.text && startMs - last.endMs <= frameMs * 2 + 1) {
      last.endMs = endMs;
      last.confidence = Math.min(last.confidence, s.confidence);
      continue;
    }
    values.push({ startMs, endMs, text: s.text, confidence: s.confidence });
  }
  return values.filter((v) => v.endMs - v.startMs >= MIN_SHOWN_MS);
}

/** What reading a clip's display needs. */
export interface ReadDisplayOptions {
  region: DisplayRegion;
  /** The clip's picture size (its probe). */
  frame: { width: number; height: number };
  durationS: number;
  container?: string;
  /** Where the frames go (a temporary folder the caller removes). */
  scratch: string;
  signal?: AbortSignal;
  reader?: FrameReader;
}

/**
 * The values the display in `region` showed, in time order: frames taken with ffmpeg (grey, the
 * region cropped and scaled), cut into still stretches, each read on up to three frames (the
 * majority reading wins; confidence is its share), kept when shown at least half a second.
 */
export async function readDisplay(input: string, options: ReadDisplayOptions): Promise<{ values: DisplayReading[]; fps: number; frames: number }> {
  const { region, frame, durationS, scratch, signal } = options;
  const reader = options.reader ?? defaultFrameReader();
  const fps = framesPerSecond(durationS);
  const size = readSize(region, frame);
  const what = "take the display's frames out of the clip";
  const format = await inputFormatArgs(input, options.container, what);
  const crop = `crop=w=iw*${region.width}:h=ih*${region.height}:x=iw*${region.x}:y=ih*${region.y}:exact=1`;
  await runFfmpeg(
    [
      '-v', 'error', '-nostats',
      ...format, '-i', input,
      '-map', '0:v:0', '-an', '-sn', '-dn',
      '-vf', `fps=${fps},${crop},scale=${size.width}:${size.height}:flags=area,format=gray`,
      '-f', 'image2', '-y', path.join(scratch, 'f%06d.pgm'),
    ],
    { what, signal, limits: { timeoutS: decodeAllTimeoutS(durationS) } },
  );
  const names = (await fsp.readdir(scratch)).filter((n) => /^f\d{6}\.pgm$/.test(n)).sort();
  const frames: Frame[] = [];
  for (const [index, name] of names.entries()) {
    const file = path.join(scratch, name);
    frames.push({ index, file, pixels: pgmPixels(await fsp.readFile(file)) });
  }
  const read: { firstIndex: number; lastIndex: number; text: string | null; confidence: number }[] = [];
  const cache = new Map<string, string | null>();
  for (const stretch of stillStretches(frames)) {
    if ((stretch.length * 1000) / fps < MIN_SHOWN_MS) continue;
    const votes = new Map<string, number>();
    const sample = sampleOf(stretch);
    for (const f of sample) {
      signal?.throwIfAborted();
      const hash = crypto.createHash('sha1').update(f.pixels).digest('hex');
      let text = cache.get(hash);
      if (text === undefined) {
        text = greySpread(f.pixels) < MIN_SPREAD ? null : await reader(f.file, meanOf(f.pixels) < 128, signal);
        cache.set(hash, text);
      }
      if (text !== null) votes.set(text, (votes.get(text) ?? 0) + 1);
    }
    const [best] = [...votes.entries()].sort((a, b) => b[1] - a[1]);
    read.push({
      firstIndex: stretch[0]!.index,
      lastIndex: stretch.at(-1)!.index,
      text: best && best[1] * 2 > sample.length ? best[0] : null,
      confidence: best ? best[1] / sample.length : 0,
    });
  }
  return { values: valuesShown(read, fps), fps, frames: frames.length };
}

function meanOf(pixels: Buffer): number {
  let sum = 0;
  for (const p of pixels) sum += p;
  return pixels.length ? sum / pixels.length : 0;
}

/** The 2nd to 98th percentile spread of grey levels (0–255). */
export function greySpread(pixels: Buffer): number {
  if (pixels.length === 0) return 0;
  const counts = new Array<number>(256).fill(0);
  for (const p of pixels) counts[p]! += 1;
  const level = (share: number) => {
    const target = share * pixels.length;
    let seen = 0;
    for (let v = 0; v < 256; v++) {
      seen += counts[v]!;
      if (seen > target) return v;
    }
    return 255;
  };
  return level(0.98) - level(0.02);
}
