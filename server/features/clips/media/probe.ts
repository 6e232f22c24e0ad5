import type { ClipProbe } from '@shared/clips/clip.schema';
import { readTopLevelAtoms } from './atoms';
import { MediaCommandFailed, runFfmpeg, runFfprobe } from './ffmpeg-run';
import { demuxerFor, describeNonVideo, readHead, sniffContainer, VIDEO_DEMUXERS } from './sniff';

/** Why a file was refused; stable strings for the API's error codes. */
export type MediaRejectionCode = 'empty_file' | 'not_a_video' | 'no_video_stream' | 'zero_duration' | 'damaged_video' | 'too_long';

/**
 * The uploaded file itself cannot become a clip. The message says what is wrong and what to
 * do, and is safe to show to the builder; retrying will not help.
 */
export class MediaRejected extends Error {
  constructor(
    reason: string,
    readonly code: MediaRejectionCode,
  ) {
    super(reason);
    this.name = 'MediaRejected';
  }
}

/** Limits and checks of probeVideo. */
export interface ProbeOptions {
  /** Longest clip accepted, seconds; longer ones are refused with `too_long`. */
  maxSeconds?: number;
  /**
   * Decode a picture at the start and near the end (default true). ffprobe reads only headers,
   * so a file whose index is intact but whose data is cut off passes it; decoding catches that.
   */
  decodeCheck?: boolean;
  signal?: AbortSignal;
}

const ISO_BMFF = new Set(['mp4', 'mov', 'm4v', '3gp']);
const RECOPY = 'Copy it from the camera or phone again and upload the new copy.';

/**
 * What is in a video file: container (from its magic bytes), codecs, duration, size, frame
 * rate and display rotation. Refuses, with MediaRejected, anything that is not a whole,
 * decodable video within the length limit.
 */
export async function probeVideo(file: string, options: ProbeOptions = {}): Promise<ClipProbe> {
  const head = await readHead(file);
  if (head.length === 0) {
    throw new MediaRejected('This file is empty (0 bytes). It may not have finished uploading; choose the video file again.', 'empty_file');
  }
  const container = sniffContainer(head);
  if (!container) {
    throw new MediaRejected(
      `This file is not a video (it looks like ${describeNonVideo(head)}). Upload the clip as your camera or phone recorded it (MP4, MOV, MKV, WebM, AVI…).`,
      'not_a_video',
    );
  }
  if (ISO_BMFF.has(container) && (await readTopLevelAtoms(file)).truncated) {
    throw damaged('the file ends before its video data does, so it was cut short while recording, copying or uploading');
  }

  let info: FfprobeOutput;
  try {
    // Not pinned: this is where ffmpeg names the format. It may only pick a demuxer of the
    // containers we accept, never a playlist (HLS), concatenation or image sequence one.
    const formats = ['-format_whitelist', VIDEO_DEMUXERS.join(',')];
    const { stdout } = await runFfprobe(['-v', 'error', ...formats, '-print_format', 'json', '-show_format', '-show_streams', file], {
      what: 'read the video',
      signal: options.signal,
    });
    info = JSON.parse(stdout.toString('utf8')) as FfprobeOutput;
  } catch (err) {
    if (err instanceof MediaCommandFailed) throw damaged(explainProbeFailure(err.stderrTail));
    throw err;
  }

  // Every later command reads the file with the demuxer its magic bytes name (`-f`), so ffprobe
  // must have read it with that one too.
  const demuxer = demuxerFor(container)!;
  if (!(info.format?.format_name ?? '').split(',').includes(demuxer)) {
    throw damaged(`its contents are not those of the ${container.toUpperCase()} file its first bytes announce`);
  }

  const streams = info.streams ?? [];
  const video = streams.find((s) => s.codec_type === 'video' && !s.disposition?.attached_pic);
  const audio = streams.find((s) => s.codec_type === 'audio');
  if (!video) {
    throw new MediaRejected(
      audio
        ? 'This file has no video track, only sound. Upload a video clip.'
        : 'This file has no video track (it holds no pictures). Upload a video clip.',
      'no_video_stream',
    );
  }
  const width = Number(video.width);
  const height = Number(video.height);
  if (!(width > 0 && height > 0)) throw damaged('its video track has no picture size');

  const durationS = firstPositive(info.format?.duration, video.duration, mkvDuration(video.tags?.DURATION), mkvDuration(video.tags?.duration)) ?? 0;
  if (!(durationS > 0)) {
    throw new MediaRejected(
      'This video has no length (0 seconds). It may be a single picture or a recording that never finished; export it again from the camera or editor.',
      'zero_duration',
    );
  }
  if (options.maxSeconds != null && durationS > options.maxSeconds) {
    throw new MediaRejected(
      `This clip is ${formatLength(durationS)} long; the longest Benchproof accepts is ${formatLength(options.maxSeconds)}. Trim it or split it into shorter clips, then upload again.`,
      'too_long',
    );
  }
  if (options.decodeCheck !== false) await checkDecodes(file, demuxer, durationS, options.signal);

  return {
    container,
    videoCodec: video.codec_name ?? 'unknown',
    audioCodec: audio?.codec_name ?? null,
    durationS: Math.round(durationS * 1000) / 1000,
    width,
    height,
    frameRate: frameRateOf(video, durationS),
    rotation: rotationOf(video),
  };
}

/**
 * Decodes one picture at the start and one 2 s before the end, in parallel. The second seek is
 * accurate, so everything from the keyframe before it must decode: a file whose data stops
 * early fails here. Costs at most one keyframe interval of decoding.
 */
async function checkDecodes(file: string, demuxer: string, durationS: number, signal?: AbortSignal) {
  const grab = async (seekS: number | null) => {
    const seek = seekS == null ? [] : ['-ss', seekS.toFixed(3)];
    try {
      const { stdout } = await runFfmpeg(
        ['-v', 'error', ...seek, '-f', demuxer, '-i', file, '-map', '0:v:0', '-frames:v', '1', '-vf', 'scale=16:16', '-vsync', '0', '-pix_fmt', 'gray', '-f', 'rawvideo', 'pipe:1'],
        { what: 'decode the video', signal },
      );
      return stdout.length > 0;
    } catch (err) {
      if (err instanceof MediaCommandFailed) return false;
      throw err;
    }
  };
  const [start, end] = await Promise.all([grab(null), durationS > 3 ? grab(durationS - 2) : Promise.resolve(true)]);
  if (!start) throw damaged('no picture could be decoded from its start');
  if (!end) throw damaged('no picture could be decoded near its end, so it is probably cut short');
}

function damaged(detail: string) {
  return new MediaRejected(`This video is damaged or incomplete: ${detail}. ${RECOPY}`, 'damaged_video');
}

function explainProbeFailure(stderr: string): string {
  if (/moov atom not found/i.test(stderr)) {
    return 'its index (the "moov atom") is missing, which happens when a recording or a copy stops before the end';
  }
  if (/partial file|end of file|truncat/i.test(stderr)) return 'the file ends before its data does, so it was cut short';
  if (/invalid data found when processing input/i.test(stderr)) return 'its contents could not be read as video';
  return 'ffprobe could not read it';
}

interface FfprobeStream {
  codec_type?: string;
  codec_name?: string;
  width?: number;
  height?: number;
  avg_frame_rate?: string;
  r_frame_rate?: string;
  nb_frames?: string;
  duration?: string;
  disposition?: { attached_pic?: number };
  tags?: Record<string, string>;
  side_data_list?: { side_data_type?: string; rotation?: number | string }[];
}
interface FfprobeOutput {
  streams?: FfprobeStream[];
  format?: { duration?: string; format_name?: string };
}

function firstPositive(...values: (string | number | undefined | null)[]): number | null {
  for (const v of values) {
    const n = Number(v);
    if (v != null && Number.isFinite(n) && n > 0) return n;
  }
  return null;
}

/** Matroska keeps stream durations as a tag, "00:01:02.500000000". */
function mkvDuration(tag: string | undefined): number | null {
  const m = tag?.match(/^(\d+):(\d{2}):(\d{2}(?:\.\d+)?)$/);
  return m ? Number(m[1]) * 3600 + Number(m[2]) * 60 + Number(m[3]) : null;
}

function rate(text: string | undefined): number | null {
  const m = text?.match(/^(\d+)\/(\d+)$/);
  if (!m || Number(m[2]) === 0) return null;
  const r = Number(m[1]) / Number(m[2]);
  return r > 0 ? r : null;
}

function frameRateOf(video: FfprobeStream, durationS: number): number {
  // avg_frame_rate is what plays; r_frame_rate is a guess that some containers inflate (1000/1).
  const fps = rate(video.avg_frame_rate) ?? rate(video.r_frame_rate) ?? firstPositive(Number(video.nb_frames) / durationS) ?? 30;
  return Math.round(fps * 1000) / 1000;
}

/** Clockwise degrees to turn the stored picture for display, 0/90/180/270. */
function rotationOf(video: FfprobeStream): number {
  const matrix = video.side_data_list?.find((d) => d.side_data_type === 'Display Matrix' && d.rotation != null);
  // The display matrix angle is counter-clockwise; the old `rotate` tag is clockwise.
  const degrees = matrix ? -Number(matrix.rotation) : Number(video.tags?.rotate ?? 0);
  if (!Number.isFinite(degrees)) return 0;
  return (((Math.round(degrees / 90) * 90) % 360) + 360) % 360;
}

function formatLength(seconds: number): string {
  const s = Math.round(seconds);
  const h = Math.floor(s / 3600);
  const m = Math.floor((s % 3600) / 60);
  const parts = [h ? `${h} h` : '', m ? `${m} min` : '', s % 60 || (!h && !m) ? `${s % 60} s` : ''];
  return parts.filter(Boolean).join(' ');
}
