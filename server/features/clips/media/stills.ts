import type { z } from 'zod';
import type { thumbnailStripSchema } from '@shared/clips/clip.schema';
import { MediaCommandFailed, runFfmpeg, runFfprobe, sizeOf, writeAtomically } from './ffmpeg-run';

/** Tile count, spacing and tile size of a strip, as stored with the clip. */
export type ThumbnailStrip = z.infer<typeof thumbnailStripSchema>;

interface StillOptions {
  signal?: AbortSignal;
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
  await writeAtomically(output, async (scratch) => {
    for (const window of WINDOWS) {
      await runFfmpeg(extractFrameArgs(input, atS, scratch, window), what(atS, options));
      if ((await sizeOf(scratch)) > 0) return;
    }
    await runFfmpeg(frameArgs(['-ss', secs(atS)], input, [], scratch), what(atS, options));
    if ((await sizeOf(scratch)) === 0) throw new MediaCommandFailed(`There is no picture at ${atS.toFixed(3)} s in this video.`, '', 0);
  });
}

/**
 * The ffmpeg arguments extractFrame runs first (exported for the benchmark, which times the
 * same command without the wrapper): frames in [atS − window, atS + 1 ms), reversed, the
 * first one out, which is the last frame up to atS.
 */
export function extractFrameArgs(input: string, atS: number, output: string, window = WINDOWS[0]!): string[] {
  const from = Math.max(0, atS + MS_TOLERANCE - window);
  const span = atS + MS_TOLERANCE - from;
  return frameArgs(['-ss', secs(from), '-t', secs(span)], input, ['-vf', 'reverse'], output);
}

/**
 * The poster: the frame at `atS` (or the first frame when there is none there), at most
 * `maxWidth` wide with square pixels and upright, as a JPEG. Temp name then rename.
 */
export async function makePoster(input: string, output: string, atS: number, options: StillOptions & { maxWidth?: number } = {}): Promise<void> {
  const maxWidth = options.maxWidth ?? 1280;
  const scale = ['-vf', `scale=w='min(${maxWidth},trunc(iw*sar/2)*2)':h='trunc(ow/dar/2)*2',setsar=1`];
  await writeAtomically(output, async (scratch) => {
    await runFfmpeg(frameArgs(['-ss', secs(atS)], input, scale, scratch), what(atS, options, 'make the poster'));
    if ((await sizeOf(scratch)) > 0) return;
    await runFfmpeg(frameArgs([], input, scale, scratch), what(0, options, 'make the poster'));
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
 * [i·intervalS, (i+1)·intervalS) and shows the frame nearest its middle. Decodes keyframes only
 * (a fraction of a second even for long 1080p clips) when they lie close enough to every
 * tile's time; otherwise decodes everything (slow: about real time for 1080p on two cores).
 */
export async function makeThumbnailStrip(input: string, output: string, options: ThumbnailStripOptions): Promise<ThumbnailStrip> {
  const { count, tileWidth, signal } = options;
  if (!Number.isInteger(count) || count < 1) throw new RangeError('count must be a positive whole number');
  if (!Number.isInteger(tileWidth) || tileWidth < 2 || count * tileWidth > 65_500) {
    throw new RangeError('tileWidth must be a whole number ≥ 2, and count × tileWidth at most 65,500 (the JPEG limit)');
  }
  const durationS = options.durationS ?? (await readDurationS(input, signal));
  const intervalS = durationS / count;
  const targets = Array.from({ length: count }, (_, i) => (i + 0.5) * intervalS);

  let tiles = await tileCandidates(input, tileWidth, null, signal);
  let chosen = nearest(tiles.frames, targets);
  if (!chosen || chosen.worstS > intervalS) {
    // Keyframes too sparse (long-GOP cameras, screen recorders): decode all, keep ~4 per tile.
    tiles = await tileCandidates(input, tileWidth, intervalS / 4, signal);
    chosen = nearest(tiles.frames, targets);
  }
  if (!chosen) throw new MediaCommandFailed('Could not make the thumbnails: no picture could be decoded.', '', 0);
  const { width, height } = tiles;
  const picked = chosen.indexes.map((i) => tiles.frames[i]!.pixels);

  await writeAtomically(output, async (scratch) => {
    await runFfmpeg(
      ['-v', 'error', '-f', 'rawvideo', '-pix_fmt', 'rgb24', '-s', `${width}x${height}`, '-i', 'pipe:0', '-vf', `tile=${count}x1`, '-frames:v', '1', '-q:v', '4', '-f', 'image2', '-update', '1', '-y', scratch],
      { what: 'make the thumbnails', signal, stdin: Buffer.concat(picked) },
    );
  });
  return { count, intervalS: Math.round(intervalS * 1000) / 1000 || 0.001, width, height };
}

interface Candidates {
  width: number;
  height: number;
  frames: { t: number; pixels: Buffer }[];
}

/** Small RGB frames with their times: keyframes only (everyS null) or one every `everyS`. */
async function tileCandidates(input: string, tileWidth: number, everyS: number | null, signal?: AbortSignal): Promise<Candidates> {
  const times: number[] = [];
  let width = 0;
  let height = 0;
  const select = everyS == null ? '' : `select='isnan(prev_selected_t)+gte(t-prev_selected_t,${everyS.toFixed(4)})',`;
  const { stdout } = await runFfmpeg(
    [
      '-v', 'info', '-nostats',
      ...(everyS == null ? ['-skip_frame', 'nokey'] : []),
      '-i', input, '-map', '0:v:0', '-an', '-sn', '-dn',
      // Square pixels at the shown shape (dar), upright (autorotate runs first).
      '-vf', `${select}scale=${tileWidth}:trunc(${tileWidth}/dar/2)*2,setsar=1,showinfo`,
      '-vsync', '0', '-pix_fmt', 'rgb24', '-f', 'rawvideo', 'pipe:1',
    ],
    {
      what: 'make the thumbnails',
      signal,
      onStderrLine: (line) => {
        if (!line.includes('Parsed_showinfo')) return;
        const t = line.match(/pts_time:\s*(-?[\d.]+)/);
        const s = line.match(/\bs:(\d+)x(\d+)/);
        if (!t) return;
        times.push(Number(t[1]));
        if (s && !width) [width, height] = [Number(s[1]), Number(s[2])];
      },
    },
  );
  const frameBytes = width * height * 3;
  const n = frameBytes ? Math.min(times.length, Math.floor(stdout.length / frameBytes)) : 0;
  const frames = Array.from({ length: n }, (_, i) => ({ t: times[i]!, pixels: stdout.subarray(i * frameBytes, (i + 1) * frameBytes) }));
  return { width, height, frames };
}

/** For each target time, the index of the frame nearest to it, and the worst distance. */
function nearest(frames: { t: number }[], targets: number[]): { indexes: number[]; worstS: number } | null {
  if (frames.length === 0) return null;
  let worstS = 0;
  const indexes = targets.map((target) => {
    let best = 0;
    for (let i = 1; i < frames.length; i++) {
      if (Math.abs(frames[i]!.t - target) < Math.abs(frames[best]!.t - target)) best = i;
    }
    worstS = Math.max(worstS, Math.abs(frames[best]!.t - target));
    return best;
  });
  return { indexes, worstS };
}

async function readDurationS(input: string, signal?: AbortSignal): Promise<number> {
  const { stdout } = await runFfprobe(['-v', 'error', '-show_entries', 'format=duration', '-of', 'csv=p=0', input], { what: 'read the video', signal });
  const d = Number(stdout.toString('utf8').trim());
  if (!(d > 0)) throw new MediaCommandFailed('Could not make the thumbnails: the video has no duration.', '', 0);
  return d;
}

function frameArgs(seek: string[], input: string, filters: string[], output: string): string[] {
  return ['-v', 'error', ...seek, '-i', input, '-map', '0:v:0', ...filters, '-frames:v', '1', '-q:v', '3', '-f', 'image2', '-update', '1', '-y', output];
}

function what(atS: number, options: StillOptions, task = `take the picture at ${atS.toFixed(3)} s`) {
  return { what: task, signal: options.signal };
}

function secs(s: number): string {
  return s.toFixed(6);
}
