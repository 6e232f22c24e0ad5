import { runFfmpeg, writeAtomically } from './ffmpeg-run';
import { transcodeTimeoutS } from './limits';
import type { WebCopyKind } from './plan';
import { inputFormatArgs } from './sniff';

/** Inputs of makeWebCopy besides the files. */
export interface WebCopyOptions {
  /** Duration of the input (from the probe), for the progress percentage. */
  durationS: number;
  /** 0–100, several times a second while ffmpeg runs; 100 once the file is in place. */
  onProgress?: (percent: number) => void;
  /** Aborting kills ffmpeg, deletes the partial file and rejects with the signal's reason. */
  signal?: AbortSignal;
  /** The container the probe named (`clip.container`); read from the file's first bytes when absent. */
  container?: string;
  /** Wall-clock bound, seconds; transcodeTimeoutS(durationS) when absent. */
  timeoutS?: number;
}

// Both kinds: the first video and first sound track only (subtitle and data tracks of MKV/MOV
// often have no MP4 form), and the index moved to the front so playback starts at once.
const COMMON_OUT = ['-map', '0:v:0', '-map', '0:a:0?', '-sn', '-dn', '-movflags', '+faststart', '-max_muxing_queue_size', '1024', '-f', 'mp4'];
const TRANSCODE = [
  // ffmpeg turns the picture upright itself (autorotate) and drops the rotation tag; then make
  // the size even, which 4:2:0 H.264 needs.
  '-vf', 'scale=trunc(iw/2)*2:trunc(ih/2)*2',
  '-c:v', 'libx264', '-preset', 'veryfast', '-crf', '23', '-pix_fmt', 'yuv420p',
  // A keyframe every second: seeking in the player, evidence frames and thumbnails then
  // decode at most one second of video.
  '-force_key_frames', 'expr:gte(t,n_forced*1)',
  '-c:a', 'aac', '-b:a', '160k',
];

/**
 * Makes the MP4 that browsers play from `input`: `remux` copies the streams into MP4,
 * `transcode` re-encodes to H.264 (libx264 veryfast, CRF 23, 8-bit 4:2:0, upright, even size)
 * + AAC. Written under a scratch name and renamed into `output`, so `output` is either whole or
 * absent; on failure the scratch file is deleted and MediaCommandFailed carries ffmpeg's reason.
 * ffmpeg is stopped after transcodeTimeoutS(durationS) seconds.
 */
export async function makeWebCopy(input: string, output: string, kind: Exclude<WebCopyKind, 'original'>, options: WebCopyOptions): Promise<void> {
  const { durationS, onProgress, signal } = options;
  let last = -1;
  const report = (percent: number) => {
    const p = Math.round(Math.min(100, Math.max(0, percent)) * 10) / 10;
    if (p !== last) {
      last = p;
      onProgress?.(p);
    }
  };
  const what = kind === 'remux' ? 'copy the video into MP4' : 'convert the video for browsers';
  const format = await inputFormatArgs(input, options.container, what);
  await writeAtomically(output, async (scratch) => {
    await runFfmpeg(
      [
        '-v', 'error', '-nostats', '-progress', 'pipe:1',
        ...format, '-i', input,
        ...(kind === 'remux' ? ['-c', 'copy'] : TRANSCODE), ...COMMON_OUT,
        '-y', scratch,
      ],
      {
        what,
        signal,
        limits: { timeoutS: options.timeoutS ?? transcodeTimeoutS(durationS) },
        onStdoutLine: (line) => {
          // `-progress` writes key=value blocks; out_time is how far the output has got.
          if (!line.startsWith('out_time=')) return;
          const t = timemarkSeconds(line.slice('out_time='.length));
          // Held below 100 until the file is in place: +faststart rewrites it after the last frame.
          if (t != null && durationS > 0) report(Math.min(99, (t / durationS) * 100));
        },
      },
    );
  });
  report(100);
}

/** Seconds from an ffmpeg time mark ("00:01:02.50", as `-progress` writes out_time); null when absent or negative. */
export function timemarkSeconds(mark: string | undefined): number | null {
  const m = /^(\d+):(\d{2}):(\d{2}(?:\.\d+)?)$/.exec(mark ?? '');
  return m ? Number(m[1]) * 3600 + Number(m[2]) * 60 + Number(m[3]) : null;
}
