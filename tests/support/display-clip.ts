import { execFile } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { promisify } from 'node:util';
import { mediaBinaries } from '../../server/features/clips/media/binaries';

/*
 * Clips with an instrument display in the picture, for the display-reading tests: a bench-grey
 * 640×360 scene, a dark display box, and figures drawn in Debian's seven-segment font (fonts-dseg,
 * installed with the speech packages by scripts/lib/speech.ts) at the times given, with moving
 * noise over the whole picture as a camera adds, muxed as H.264 in MP4 with a silent sound track.
 */

const run = promisify(execFile);
/** Debian's fonts-dseg. */
export const SEGMENT_FONT = '/usr/share/fonts/truetype/dseg/DSEG7Classic-Regular.ttf';

/** One figure on the display from `fromS` to `toS` seconds. */
export interface ShownFigure {
  fromS: number;
  toS: number;
  text: string;
}

/** Where the display box is drawn, in pixels of the 640×360 frame, and as fractions of it. */
export const DISPLAY_BOX = { x: 360, y: 110, w: 250, h: 110 } as const;
export const DISPLAY_REGION = { x: 350 / 640, y: 100 / 360, width: 270 / 640, height: 130 / 360 } as const;

/** A `seconds`-long MP4 whose display shows each figure in its interval; its path (`<dir>/<name>.mp4`). */
export async function makeDisplayClip(options: { dir: string; seconds: number; shown: readonly ShownFigure[]; name?: string }): Promise<string> {
  if (!fs.existsSync(SEGMENT_FONT)) throw new Error(`${SEGMENT_FONT} is missing: npm test installs fonts-dseg (scripts/lib/speech.ts)`);
  const { dir, seconds, shown } = options;
  const file = path.join(dir, `${options.name ?? 'display'}.mp4`);
  const b = DISPLAY_BOX;
  const filters = [`drawbox=x=${b.x}:y=${b.y}:w=${b.w}:h=${b.h}:color=0x101314:t=fill`];
  for (const f of shown) {
    const on = `enable='between(t,${f.fromS},${f.toS - 0.001})'`;
    filters.push(`drawtext=fontfile=${SEGMENT_FONT}:fontsize=40:fontcolor=0xff5a36:text='${f.text}':x=${b.x + b.w / 2}-text_w/2:y=${b.y + b.h / 2}-text_h/2:${on}`);
  }
  filters.push('noise=alls=8:allf=t');
  await run(mediaBinaries().ffmpeg, [
    '-v', 'error', '-y',
    '-f', 'lavfi', '-i', `color=c=0x2b2f33:size=640x360:rate=30:duration=${seconds}`,
    '-f', 'lavfi', '-i', `anullsrc=r=48000:cl=mono:d=${seconds}`,
    '-filter_complex', `[0:v]${filters.join(',')}[v]`,
    '-map', '[v]', '-map', '1:a',
    '-c:v', 'libx264', '-preset', 'veryfast', '-pix_fmt', 'yuv420p',
    '-c:a', 'aac', '-t', String(seconds), '-movflags', '+faststart', '-f', 'mp4', file,
  ]);
  return file;
}
