import type { z } from 'zod';
import type { thumbnailStripSchema } from '@shared/clips/clip.schema';
import { MediaCommandFailed, runFfmpeg, runFfprobe, sizeOf, writeAtomically } from './ffmpeg-run';
import { decodeAllTimeoutS } from './limits';
import { inputFormatArgs } from './sniff';

/** Tile count, spacing and tile size of a strip, as stored with the clip. */
export type ThumbnailStrip = z.infer<typeof thumbnailStripSchema>;

interface StillOptions {
  signal?: AbortSignal;
  /** The container the probe named (`clip.container`); read from the file's first bytes when absent. */
  container?: string;
}

// Moment times are whole milliseconds: a time taken from a frame's timestamp, rounded or cut
// to the millisecond, can lie up to 1 ms before that frame and must still name it.
const MS_TOLERANCE = 0.001;
// Windows (seconds) searched before the asked time for the frame on screen: 0.1 s holds at
// least one frame of any video of 10 fps or more while keeping few frames in memory (the
// `reverse` filter buffers them); 2 s covers time-lapses.
const WINDOWS = [0.1, 2];

/**
 * The picture a viewer sees at `atS` seconds: the last frame whose timestamp is at or before
 * `atS` + 1 ms (the one a paused player shows), as a full-size JPEG (quality 3). Fast on long files:
 * the seek is on the input side, which decodes only from the keyframe before. When `atS` is
 * before the first frame, the first frame is given. Temp name then rename.
 */
export async function extractFrame(input: string, atS: number, output: string, options: StillOptions = {}): Promise<void> {
  const format = await inputFormatArgs(input, options.container, what(atS, options).what);
  await writeAtomically(output, async (scratch) => {
    for (const window of WINDOWS) {
      await runFfmpeg(extractFrameArgs(input, atS, scratch, window, format), what(atS, options));
      if ((await sizeOf(scratch)) > 0) return;
    }
    await runFfmpeg(frameArgs(['-ss', secs(atS)], format, input, [], scratch), what(atS, options));
    if ((await sizeOf(scratch)) === 0) throw new MediaCommandFailed(`There is no picture at ${atS.toFixed(3)} s in this video.`, '', 0);
  });
}

/**
 * The ffmpeg arguments extractFrame runs first (exported for the benchmark, which times the
 * same command without the wrapper): frames in [atS − window, atS + 1 ms), reversed, the
 * first one out, which is the last frame up to atS. `format` pins the demuxer (`-f mov`).
 */
export function extractFrameArgs(input: string, atS: number, output: string, window = WINDOWS[0]!, format: string[] = []): string[] {
  const from = Math.max(0, atS + MS_TOLERANCE - window);
  const span = atS + MS_TOLERANCE - from;
  return frameArgs(['-ss', secs(from), '-t', secs(span)], format, input, ['-vf', 'reverse'], output);
}

/**
 * The poster: the frame at `atS` (or the first frame when there is none there), at most
 * `maxWidth` wide with square pixels and upright, as a JPEG. At 0 it is the first frame the
 * file decodes to, read without any seek: the picture a player shows before it plays. Temp
 * name then rename.
 */
export async function makePoster(input: string, output: string, atS: number, options: StillOptions & { maxWidth?: number } = {}): Promise<void> {
  const maxWidth = options.maxWidth ?? 1280;
  const scale = ['-vf', `scale=w='min(${maxWidth},trunc(iw*sar/2)*2)':h='trunc(ow/dar/2)*2',setsar=1`];
  const format = await inputFormatArgs(input, options.container, 'make the poster');
  await writeAtomically(output, async (scratch) => {
    if (atS > 0) {
      await runFfmpeg(frameArgs(['-ss', secs(atS)], format, input, scale, scratch), what(atS, options, 'make the poster'));
      if ((await sizeOf(scratch)) > 0) return;
    }
    await runFfmpeg(frameArgs([], format, input, scale, scratch), what(0, options, 'make the poster'));
    if ((await sizeOf(scratch)) === 0) throw new MediaCommandFailed('Could not make the poster: no picture could be decoded.', '', 0);
  });
}

/** Shape of the strip. */
export interface ThumbnailStripOptions extends StillOptions {
  /** Number of tiles, side by side in one row. */
  count: number;
  /** Width of one tile, pixels; the height follows the picture's shape (even). */
  tileWidth: number;
  /** The video's duration; read with ffprobe when not given. */
  durationS?: number;
}

/**
 * One JPEG with `count` tiles in a row for scrubbing previews: tile i stands for
 * [i·intervalS, (i+1)·intervalS) and shows the frame on screen at its middle. ffmpeg picks one
 * frame per tile (`fps` at one frame per interval) and tiles them itself, so no more than a
 * tile's frame is ever held, whatever the clip's length. First from keyframes only (a
 * fraction of a second even for long 1080p clips), kept when every tile's keyframe lies within
 * 1.5 intervals of its middle; otherwise (long-GOP cameras, screen recorders) from every frame
 * (slow: about real time for 1080p on two cores).
 */
export async function makeThumbnailStrip(input: string, output: string, options: ThumbnailStripOptions): Promise<ThumbnailStrip> {
  const { count, tileWidth, signal } = options;
  if (!Number.isInteger(count) || count < 1) throw new RangeError('count must be a positive whole number');
  if (!Number.isInteger(tileWidth) || tileWidth < 2 || count * tileWidth > 65_500) {
    throw new RangeError('tileWidth must be a whole number ≥ 2, and count × tileWidth at most 65,500 (the JPEG limit)');
  }
  const format = await inputFormatArgs(input, options.container, 'make the thumbnails');
  const durationS = options.durationS ?? (await readDurationS(input, format, signal));
  const intervalS = durationS / count;
  const run = { input, format, count, tileWidth, durationS, signal };

  const size = await writeAtomically(output, async (scratch) => {
    const fast = await tileStrip({ ...run, scratch, keyframesOnly: true });
    if (fast.tiles === count && keyframesFit(fast.keyframes, count, intervalS)) return fast;
    const all = await tileStrip({ ...run, scratch, keyframesOnly: false });
    if (all.tiles === 0 || (await sizeOf(scratch)) === 0) throw new MediaCommandFailed('Could not make the thumbnails: no picture could be decoded.', '', 0);
    return all;
  });
  return { count, intervalS: Math.round(intervalS * 1000) / 1000 || 0.001, width: size.width, height: size.height };
}

/**
 * True when, for every tile, the keyframe the fast strip shows (the last at or before the
 * tile's middle, else the first) lies within 1.5 intervals of the middle: keyframes every
 * second then serve any clip of 2 s or more (our web copies have them).
 */
export function keyframesFit(keyframes: number[], count: number, intervalS: number): boolean {
  if (keyframes.length === 0) return false;
  const sorted = [...keyframes].sort((a, b) => a - b);
  for (let i = 0; i < count; i++) {
    const middle = (i + 0.5) * intervalS;
    const shown = sorted.findLast((t) => t <= middle) ?? sorted[0]!;
    if (Math.abs(middle - shown) > 1.5 * intervalS) return false;
  }
  return true;
}

interface TileRun {
  input: string;
  format: string[];
  scratch: string;
  count: number;
  tileWidth: number;
  durationS: number;
  keyframesOnly: boolean;
  signal?: AbortSignal;
}

/**
 * Runs one ffmpeg that writes the strip to `scratch`. `fps` at count/duration with its first
 * output at half an interval, rounding up, emits for each tile the last frame at or before the
 * tile's middle (repeating one when frames are sparse); `tpad` repeats the last frame so the
 * last tiles are filled too. `showinfo` after scaling counts the tiles and gives their size; in
 * the keyframe pass a first `showinfo` lists the keyframes' times.
 */
async function tileStrip(run: TileRun): Promise<{ tiles: number; keyframes: number[]; width: number; height: number }> {
  const intervalS = run.durationS / run.count;
  const filters = [
    `tpad=stop_mode=clone:stop_duration=${(2 * intervalS).toFixed(6)}`,
    `fps=fps=${run.count}/${run.durationS.toFixed(6)}:start_time=${(intervalS / 2).toFixed(6)}:round=up`,
    // Square pixels at the shown shape (dar), upright (autorotate runs first).
    `scale=${run.tileWidth}:trunc(${run.tileWidth}/dar/2)*2`,
    'setsar=1',
    'showinfo',
    `tile=${run.count}x1`,
  ];
  if (run.keyframesOnly) filters.unshift('showinfo');
  const tilesAt = filters.lastIndexOf('showinfo');
  const keyframes: number[] = [];
  let tiles = 0;
  let width = 0;
  let height = 0;
  await runFfmpeg(
    [
      '-v', 'info', '-nostats',
      ...(run.keyframesOnly ? ['-skip_frame', 'nokey'] : []),
      ...run.format, '-i', run.input, '-map', '0:v:0', '-an', '-sn', '-dn',
      '-vf', filters.join(','),
      '-vsync', '0', '-frames:v', '1', '-q:v', '4', '-f', 'image2', '-update', '1', '-y', run.scratch,
    ],
    {
      what: 'make the thumbnails',
      signal: run.signal,
      limits: { timeoutS: decodeAllTimeoutS(run.durationS) },
      onStderrLine: (line) => {
        const at = /Parsed_showinfo_(\d+) .*pts_time:\s*(-?[\d.]+)/.exec(line);
        if (!at) return;
        if (Number(at[1]) !== tilesAt) {
          keyframes.push(Number(at[2]));
          return;
        }
        tiles += 1;
        const s = /\bs:(\d+)x(\d+)/.exec(line);
        if (s && !width) [width, height] = [Number(s[1]), Number(s[2])];
      },
    },
  );
  return { tiles, keyframes, width, height };
}

async function readDurationS(input: string, format: string[], signal?: AbortSignal): Promise<number> {
  const { stdout } = await runFfprobe([...format, '-v', 'error', '-show_entries', 'format=duration', '-of', 'csv=p=0', input], { what: 'read the video', signal });
  const d = Number(stdout.toString('utf8').trim());
  if (!(d > 0)) throw new MediaCommandFailed('Could not make the thumbnails: the video has no duration.', '', 0);
  return d;
}

function frameArgs(seek: string[], format: string[], input: string, filters: string[], output: string): string[] {
  return ['-v', 'error', ...seek, ...format, '-i', input, '-map', '0:v:0', ...filters, '-frames:v', '1', '-q:v', '3', '-f', 'image2', '-update', '1', '-y', output];
}

function what(atS: number, options: StillOptions, task = `take the picture at ${atS.toFixed(3)} s`): { what: string; signal?: AbortSignal } {
  return { what: task, signal: options.signal };
}

function secs(s: number): string {
  return s.toFixed(6);
}
