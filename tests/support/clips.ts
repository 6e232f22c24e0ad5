import { execFile } from 'node:child_process';
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import path from 'node:path';
import { promisify } from 'node:util';
import zlib from 'node:zlib';
import { mediaBinaries } from '../../server/features/clips/media/binaries';

const run = promisify(execFile);
const MAX_BUFFER = 256 * 1024 * 1024;

/** The kinds of upload the media code must handle, one per plan outcome. */
export type TestClipFormat = 'mp4-h264' | 'mkv-mpeg4' | 'mkv-h264' | 'webm-vp9' | 'mov-no-faststart';

/** What makeTestClip generates. */
export interface TestClipOptions {
  format: TestClipFormat;
  /** Folder to write into (a per-test temp dir). */
  dir: string;
  seconds?: number;
  width?: number;
  height?: number;
  /** 30 by default, so that times like 2.5 s fall exactly on a frame. */
  fps?: number;
  audio?: boolean;
  /** Display rotation written into MP4/MOV (clockwise degrees), as phones do. */
  rotate?: 0 | 90 | 180 | 270;
  /** Keyframe interval; the encoder's default when omitted (x264: 250 frames). */
  keyframeEveryS?: number;
  name?: string;
}

const ENCODE: Record<TestClipFormat, { ext: string; video: string[]; audio: string[]; mux: string[] }> = {
  'mp4-h264': { ext: 'mp4', video: ['-c:v', 'libx264', '-preset', 'veryfast', '-pix_fmt', 'yuv420p'], audio: ['-c:a', 'aac'], mux: ['-movflags', '+faststart', '-f', 'mp4'] },
  'mov-no-faststart': { ext: 'mov', video: ['-c:v', 'libx264', '-preset', 'veryfast', '-pix_fmt', 'yuv420p'], audio: ['-c:a', 'aac'], mux: ['-f', 'mov'] },
  'mkv-h264': { ext: 'mkv', video: ['-c:v', 'libx264', '-preset', 'veryfast', '-pix_fmt', 'yuv420p'], audio: ['-c:a', 'aac'], mux: ['-f', 'matroska'] },
  'mkv-mpeg4': { ext: 'mkv', video: ['-c:v', 'mpeg4', '-q:v', '4'], audio: ['-c:a', 'libmp3lame', '-q:a', '5'], mux: ['-f', 'matroska'] },
  'webm-vp9': {
    ext: 'webm',
    video: ['-c:v', 'libvpx-vp9', '-deadline', 'realtime', '-cpu-used', '8', '-b:v', '0', '-crf', '40', '-pix_fmt', 'yuv420p'],
    audio: ['-c:a', 'libopus'],
    mux: ['-f', 'webm'],
  },
};

/**
 * Generates a clip with ffmpeg's test pattern (testsrc2 with the time and frame number burnt
 * in when this ffmpeg has drawtext and a font; else testsrc, which shows a counter itself) and a
 * sine tone. Returns its path. 320×240, 5 s, 30 fps unless told otherwise.
 */
export async function makeTestClip(options: TestClipOptions): Promise<string> {
  const { format, dir, seconds = 5, width = 320, height = 240, fps = 30, audio = true } = options;
  const enc = ENCODE[format];
  const file = path.join(dir, `${options.name ?? format}.${enc.ext}`);
  const font = await drawtextFont();
  const source = font ? `testsrc2=size=${width}x${height}:rate=${fps}:duration=${seconds}` : `testsrc=size=${width}x${height}:rate=${fps}:duration=${seconds}`;
  const burn = font
    ? ['-vf', `drawtext=fontfile=${font}:text='%{pts\\:hms} #%{eif\\:n\\:d}':x=8:y=8:fontsize=${Math.max(12, Math.round(height / 10))}:fontcolor=white:box=1:boxcolor=black`]
    : [];
  const args = [
    '-v', 'error', '-y',
    '-f', 'lavfi', '-i', source,
    ...(audio ? ['-f', 'lavfi', '-i', `sine=frequency=440:sample_rate=48000:duration=${seconds}`] : []),
    ...burn,
    ...enc.video,
    ...(options.keyframeEveryS ? ['-g', String(Math.max(1, Math.round(fps * options.keyframeEveryS)))] : []),
    ...(audio ? [...enc.audio, '-shortest'] : ['-an']),
    ...enc.mux,
    file,
  ];
  await run(mediaBinaries().ffmpeg, args, { maxBuffer: MAX_BUFFER });
  if (options.rotate) {
    if (enc.ext !== 'mp4' && enc.ext !== 'mov') throw new Error('rotate needs an MP4 or MOV clip');
    await setDisplayRotation(file, options.rotate);
  }
  return file;
}

/**
 * Writes the video track's display matrix (tkhd) for a clockwise turn, as phones do for
 * portrait clips. Patched in place rather than with `-metadata rotate=`, whose meaning has
 * changed between ffmpeg versions (this build's muxer writes the opposite direction).
 */
async function setDisplayRotation(file: string, clockwise: 90 | 180 | 270): Promise<void> {
  const buf = await fsp.readFile(file);
  const moov = findTopLevel(buf, 'moov');
  if (!moov) throw new Error(`no moov atom in ${file}`);
  const rad = (clockwise * Math.PI) / 180;
  const [cos, sin] = [Math.round(Math.cos(rad)), Math.round(Math.sin(rad))];
  const matrix = [cos, sin, 0, -sin, cos, 0, 0, 0, 0];
  let patched = 0;
  for (let p = buf.indexOf('tkhd', moov.start, 'latin1'); p >= 0 && p < moov.end; p = buf.indexOf('tkhd', p + 4, 'latin1')) {
    const at = p + 4 + (buf[p + 4] === 1 ? 52 : 40);
    // Only the video track: its width (16.16 fixed point, after the matrix) is non-zero.
    if (buf.readUInt32BE(at + 36) === 0) continue;
    matrix.forEach((v, i) => buf.writeInt32BE(i === 8 ? 0x40000000 : i % 3 === 2 ? 0 : v * 0x10000, at + i * 4));
    patched += 1;
  }
  if (patched !== 1) throw new Error(`expected one video track header in ${file}, found ${patched}`);
  await fsp.writeFile(file, buf);
}

function findTopLevel(buf: Buffer, type: string): { start: number; end: number } | null {
  for (let offset = 0; offset + 8 <= buf.length; ) {
    const size = buf.readUInt32BE(offset);
    if (buf.toString('latin1', offset + 4, offset + 8) === type) return { start: offset + 8, end: offset + size };
    if (size < 8) return null;
    offset += size;
  }
  return null;
}

let fontChecked: Promise<string | null> | null = null;
const FONTS = [
  '/usr/share/fonts/truetype/dejavu/DejaVuSansMono.ttf',
  '/usr/share/fonts/truetype/dejavu/DejaVuSans.ttf',
  '/usr/share/fonts/truetype/liberation/LiberationMono-Regular.ttf',
  '/usr/share/fonts/TTF/DejaVuSansMono.ttf',
  '/System/Library/Fonts/Menlo.ttc',
];

/** A font file drawtext can use in this ffmpeg build, or null when drawtext is missing or fails. */
export function drawtextFont(): Promise<string | null> {
  fontChecked ??= (async () => {
    const font = FONTS.find((f) => fs.existsSync(f));
    if (!font) return null;
    try {
      await run(mediaBinaries().ffmpeg, ['-v', 'error', '-f', 'lavfi', '-i', 'testsrc2=size=64x64:duration=0.04', '-vf', `drawtext=fontfile=${font}:text=1`, '-f', 'null', '-']);
      return font;
    } catch {
      return null;
    }
  })();
  return fontChecked;
}

/** Non-video files that arrive named like videos. */
export type DisguiseKind = 'html' | 'zip' | 'jpeg';

/**
 * A file that is not a video but is named like one (`clip.mp4` by default): an HTML page with a
 * script, a real ZIP archive, or a real JPEG photo.
 */
export async function makeDisguisedFile(kind: DisguiseKind, dir: string, name = `${kind}-disguised.mp4`): Promise<string> {
  const file = path.join(dir, name);
  if (kind === 'html') {
    await fsp.writeFile(file, '<!DOCTYPE html>\n<html><head><title>clip</title></head><body><script>alert(document.cookie)</script></body></html>\n');
  } else if (kind === 'zip') {
    await fsp.writeFile(file, zipWithOneFile('notes.txt', Buffer.from('bench notes\n')));
  } else {
    const jpeg = path.join(dir, `${path.parse(name).name}.source.jpg`);
    await run(mediaBinaries().ffmpeg, ['-v', 'error', '-y', '-f', 'lavfi', '-i', 'testsrc2=size=160x120', '-frames:v', '1', jpeg]);
    await fsp.rename(jpeg, file);
  }
  return file;
}

/** An empty file named like a video. */
export async function makeZeroByteFile(dir: string, name = 'empty.mp4'): Promise<string> {
  const file = path.join(dir, name);
  await fsp.writeFile(file, Buffer.alloc(0));
  return file;
}

/** A copy of `file` holding only its first `fraction` of bytes, as an interrupted copy leaves it. */
export async function makeTruncatedCopy(file: string, fraction = 0.4, name?: string): Promise<string> {
  const bytes = await fsp.readFile(file);
  const parsed = path.parse(file);
  const out = path.join(parsed.dir, name ?? `${parsed.name}.truncated${parsed.ext}`);
  await fsp.writeFile(out, bytes.subarray(0, Math.floor(bytes.length * fraction)));
  return out;
}

/** Decodes an image (or a video's first frame) to 8-bit grey pixels with ffmpeg. */
export async function decodeGray(file: string): Promise<{ width: number; height: number; pixels: Buffer }> {
  const { width, height } = (await ffprobeStreams(file))[0] as { width: number; height: number };
  const { stdout } = await run(mediaBinaries().ffmpeg, ['-v', 'error', '-i', file, '-frames:v', '1', '-f', 'rawvideo', '-pix_fmt', 'gray', 'pipe:1'], {
    encoding: 'buffer',
    maxBuffer: MAX_BUFFER,
  });
  return { width, height, pixels: stdout };
}

/** Mean absolute difference of two equally sized grey images, 0–255. */
export function meanAbsDiff(a: Buffer, b: Buffer): number {
  if (a.length !== b.length) throw new Error(`images differ in size (${a.length} vs ${b.length} bytes)`);
  let sum = 0;
  for (let i = 0; i < a.length; i++) sum += Math.abs(a[i]! - b[i]!);
  return sum / a.length;
}

/** ffprobe's streams and format of a file, raw (independent of the code under test). */
export async function ffprobeStreams(file: string): Promise<Record<string, unknown>[]> {
  return (await ffprobeJson(file)).streams;
}

/** ffprobe's streams and format as JSON. */
export async function ffprobeJson(file: string): Promise<{ streams: Record<string, unknown>[]; format: Record<string, unknown> }> {
  const { stdout } = await run(mediaBinaries().ffprobe, ['-v', 'error', '-print_format', 'json', '-show_streams', '-show_format', file], { maxBuffer: MAX_BUFFER });
  return JSON.parse(stdout) as { streams: Record<string, unknown>[]; format: Record<string, unknown> };
}

/** Runs the ffmpeg binary the product uses with `args`, for reference results in tests. */
export async function ffmpegDirect(args: string[]): Promise<void> {
  await run(mediaBinaries().ffmpeg, ['-hide_banner', '-nostdin', ...args], { maxBuffer: MAX_BUFFER });
}

/** A minimal valid ZIP archive (one stored entry). */
function zipWithOneFile(name: string, data: Buffer): Buffer {
  const nameBuf = Buffer.from(name);
  const crc = zlib.crc32(data);
  const local = Buffer.alloc(30);
  local.writeUInt32LE(0x04034b50, 0);
  local.writeUInt16LE(10, 4);
  local.writeUInt32LE(crc, 14);
  local.writeUInt32LE(data.length, 18);
  local.writeUInt32LE(data.length, 22);
  local.writeUInt16LE(nameBuf.length, 26);
  const central = Buffer.alloc(46);
  central.writeUInt32LE(0x02014b50, 0);
  central.writeUInt16LE(20, 4);
  central.writeUInt16LE(10, 6);
  central.writeUInt32LE(crc, 16);
  central.writeUInt32LE(data.length, 20);
  central.writeUInt32LE(data.length, 24);
  central.writeUInt16LE(nameBuf.length, 28);
  const centralOffset = local.length + nameBuf.length + data.length;
  const end = Buffer.alloc(22);
  end.writeUInt32LE(0x06054b50, 0);
  end.writeUInt16LE(1, 8);
  end.writeUInt16LE(1, 10);
  end.writeUInt32LE(central.length + nameBuf.length, 12);
  end.writeUInt32LE(centralOffset, 16);
  return Buffer.concat([local, nameBuf, data, central, nameBuf, end]);
}
