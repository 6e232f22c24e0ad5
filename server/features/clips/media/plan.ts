import type { z } from 'zod';
import type { ClipProbe, webCopyKindSchema } from '@shared/clips/clip.schema';
import { moovBeforeMdat } from './atoms';
import { runFfprobe } from './ffmpeg-run';
import { inputFormatArgs } from './sniff';

/** original | remux | transcode, from the shared schema. */
export type WebCopyKind = z.infer<typeof webCopyKindSchema>;

/** What the choice of web copy depends on, beyond the stored probe. */
export interface WebCopyFacts {
  container: string;
  videoCodec: string;
  audioCodec: string | null;
  /** ffprobe's pix_fmt of the video stream ("yuv420p", "yuv420p10le"…); null if unknown. */
  pixelFormat: string | null;
  /** MP4/MOV only: the index (moov) comes before the media data; null for other containers. */
  fastStart: boolean | null;
}

const ISO_BMFF = new Set(['mp4', 'm4v', 'mov']);
// 8-bit 4:2:0 is the only H.264/VP9 layout every current browser decodes (High 10 and 4:2:2
// fail in Chrome and Firefox); yuvj420p is the same layout with the full-range flag.
const EIGHT_BIT_420 = new Set(['yuv420p', 'yuvj420p']);
const MP4_AUDIO = new Set(['aac', 'mp3']);
const WEBM_VIDEO = new Set(['vp8', 'vp9']);
const WEBM_AUDIO = new Set(['vorbis', 'opus']);

/**
 * How to make the copy browsers play (Chrome, Firefox, Safari, Edge), by these rules:
 * - `original`: MP4/M4V/MOV holding H.264 8-bit 4:2:0 with AAC, MP3 or no sound, index first
 *   (fast start); or WebM holding VP8/VP9 8-bit with Vorbis, Opus or no sound.
 * - `remux` (streams copied into MP4 with +faststart, seconds of work): the same H.264 and
 *   sound in a container browsers do not play (MKV, AVI, MPEG-TS, FLV, 3GP…), or an MP4/MOV
 *   whose index sits at the end, which would make the browser fetch the whole file first.
 * - `transcode` (H.264 + AAC, minutes of work): anything else: MPEG-4 Part 2, HEVC (Firefox
 *   and older Chrome lack it), ProRes, AV1, 10-bit or 4:2:2 H.264, VP9 outside WebM, PCM or
 *   AC-3 sound…
 * The web copy is always MP4, so VP8/VP9 in MKV is transcoded rather than re-wrapped.
 */
export function chooseWebCopy(facts: WebCopyFacts): WebCopyKind {
  const pixOk = facts.pixelFormat == null || EIGHT_BIT_420.has(facts.pixelFormat);
  if (facts.container === 'webm' && WEBM_VIDEO.has(facts.videoCodec) && pixOk && (facts.audioCodec == null || WEBM_AUDIO.has(facts.audioCodec))) {
    return 'original';
  }
  const streamsOk = facts.videoCodec === 'h264' && pixOk && (facts.audioCodec == null || MP4_AUDIO.has(facts.audioCodec));
  if (!streamsOk) return 'transcode';
  return ISO_BMFF.has(facts.container) && facts.fastStart === true ? 'original' : 'remux';
}

/**
 * The web copy a clip needs: reads the two facts the stored probe lacks (pixel format, and
 * for MP4/MOV whether the index is first) from the file, then applies chooseWebCopy.
 */
export async function planWebCopy(probe: ClipProbe, container: string, file: string): Promise<WebCopyKind> {
  const [pixelFormat, fastStart] = await Promise.all([
    videoPixelFormat(file, container),
    ISO_BMFF.has(container) ? moovBeforeMdat(file) : Promise.resolve(null),
  ]);
  return chooseWebCopy({ container, videoCodec: probe.videoCodec, audioCodec: probe.audioCodec, pixelFormat, fastStart });
}

/**
 * ffprobe's pix_fmt of the first real video stream (cover pictures skipped), or null. Read with
 * the demuxer of `container` (the probe's), else of the file's first bytes.
 */
export async function videoPixelFormat(file: string, container?: string): Promise<string | null> {
  const what = 'read the video';
  const { stdout } = await runFfprobe(
    [...(await inputFormatArgs(file, container, what)), '-v', 'error', '-select_streams', 'v', '-show_entries', 'stream=pix_fmt:stream_disposition=attached_pic', '-print_format', 'json', file],
    { what },
  );
  const streams = (JSON.parse(stdout.toString('utf8')) as { streams?: { pix_fmt?: string; disposition?: { attached_pic?: number } }[] }).streams ?? [];
  return streams.find((s) => !s.disposition?.attached_pic)?.pix_fmt ?? null;
}

/** Width and height as shown, after the display rotation. */
export function displaySize(probe: Pick<ClipProbe, 'width' | 'height' | 'rotation'>): { width: number; height: number } {
  const quarter = probe.rotation % 180 !== 0;
  return quarter ? { width: probe.height, height: probe.width } : { width: probe.width, height: probe.height };
}
