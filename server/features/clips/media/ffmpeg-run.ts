import { spawn } from 'node:child_process';
import crypto from 'node:crypto';
import fsp from 'node:fs/promises';
import path from 'node:path';
import { mediaBinaries } from './binaries';

/**
 * ffmpeg or ffprobe failed on a file that passed the checks (or could not be started). The
 * message is one sentence built from ffmpeg's last error lines; `stderrTail` keeps the raw lines
 * for the log.
 */
export class MediaCommandFailed extends Error {
  readonly code = 'media_command_failed';
  constructor(
    message: string,
    readonly stderrTail: string,
    readonly exitCode: number | null,
  ) {
    super(message);
    this.name = 'MediaCommandFailed';
  }
}

/** How to run one ffmpeg/ffprobe command. */
export interface RunOptions {
  /** What the command is for, as the end of "Could not …" ("make the web copy"). */
  what: string;
  signal?: AbortSignal;
  /** Bytes written to the command's standard input, which is then closed. */
  stdin?: Buffer;
  /** Each line of standard output as it arrives (ffmpeg's `-progress pipe:1`). */
  onStdoutLine?: (line: string) => void;
  /** Each line of standard error as it arrives (e.g. `showinfo` output). */
  onStderrLine?: (line: string) => void;
}

/** Standard output (unless streamed to onStdoutLine) and the last 64 KiB of standard error. */
export interface RunResult {
  stdout: Buffer;
  stderr: string;
}

const STDERR_KEEP = 64 * 1024;

/**
 * Runs ffmpeg with `args` (no shell). Resolves with its output when it exits 0; otherwise
 * rejects with MediaCommandFailed, or with the signal's reason when aborted (the process is
 * killed and has exited before the promise settles, so callers can delete its output safely).
 */
export function runFfmpeg(args: string[], options: RunOptions): Promise<RunResult> {
  return run(mediaBinaries().ffmpeg, ['-hide_banner', '-nostdin', ...args], options);
}

/** Like runFfmpeg, for ffprobe. */
export function runFfprobe(args: string[], options: RunOptions): Promise<RunResult> {
  return run(mediaBinaries().ffprobe, ['-hide_banner', ...args], options);
}

function run(bin: string, args: string[], options: RunOptions): Promise<RunResult> {
  const { signal } = options;
  if (signal?.aborted) return Promise.reject(abortReason(signal));
  return new Promise((resolve, reject) => {
    const child = spawn(bin, args, { stdio: ['pipe', 'pipe', 'pipe'], windowsHide: true });
    const out: Buffer[] = [];
    let stderr = '';
    let outLine = '';
    let errLine = '';
    let spawnError: Error | null = null;
    const onAbort = () => child.kill('SIGKILL');
    signal?.addEventListener('abort', onAbort, { once: true });

    child.stdout.on('data', (chunk: Buffer) => {
      if (options.onStdoutLine) {
        outLine = eachLine(outLine + chunk.toString('utf8'), options.onStdoutLine);
      } else {
        out.push(chunk);
      }
    });
    child.stderr.on('data', (chunk: Buffer) => {
      const text = chunk.toString('utf8');
      stderr = (stderr + text).slice(-STDERR_KEEP);
      if (options.onStderrLine) errLine = eachLine(errLine + text, options.onStderrLine);
    });
    // ffmpeg may exit before reading all its input (an error, or enough frames): not our failure.
    child.stdin.on('error', () => {});
    child.stdin.end(options.stdin ?? undefined);
    child.on('error', (err) => {
      spawnError = err;
    });
    child.on('close', (code, killedBy) => {
      signal?.removeEventListener('abort', onAbort);
      if (signal?.aborted) return reject(abortReason(signal));
      if (spawnError) {
        const missing = (spawnError as NodeJS.ErrnoException).code === 'ENOENT';
        const why = missing ? `${path.basename(bin)} was not found (${bin})` : spawnError.message;
        return reject(new MediaCommandFailed(`Could not ${options.what}: ${why}.`, '', null));
      }
      if (code === 0) return resolve({ stdout: Buffer.concat(out), stderr });
      const summary = summariseStderr(stderr) ?? (killedBy ? `it was stopped (${killedBy})` : `it exited with code ${code}`);
      reject(new MediaCommandFailed(`Could not ${options.what}: ${summary}.`, stderr.slice(-4000), code));
    });
  });
}

function eachLine(buffered: string, fn: (line: string) => void): string {
  const lines = buffered.split(/\r?\n|\r/);
  const rest = lines.pop() ?? '';
  for (const line of lines) fn(line);
  return rest;
}

function abortReason(signal: AbortSignal): unknown {
  return signal.reason ?? new DOMException('The operation was aborted.', 'AbortError');
}

/**
 * ffmpeg's last few distinct error lines as one clause, without the `[h264 @ 0x…]` prefixes
 * and stats lines that mean nothing to a person; null when it printed nothing useful.
 */
export function summariseStderr(stderr: string): string | null {
  const lines: string[] = [];
  for (const raw of stderr.split(/\r?\n|\r/)) {
    const line = raw
      .replace(/^\s*(\[[^\]]+ @ 0x[0-9a-f]+\]\s*)+/i, '')
      .replace(/\s+/g, ' ')
      .trim();
    if (!line || /^(frame|size|video|progress)=/.test(line) || line === 'Conversion failed!') continue;
    if (lines.at(-1) !== line) lines.push(line);
  }
  if (lines.length === 0) return null;
  const text = [...new Set(lines.slice(-3))].join('; ').replace(/[.\s]+$/, '');
  return text.length > 300 ? `${text.slice(0, 297)}…` : text;
}

/**
 * Runs `make` with a scratch name beside `output` (same folder, same extension, so the same
 * file system and the same muxer guess) and renames it into place only when `make` succeeds,
 * so a crash never leaves a half-written file under the final name. On failure the scratch
 * file is deleted and the error passed on.
 */
export async function writeAtomically<T>(output: string, make: (scratch: string) => Promise<T>): Promise<T> {
  const dir = path.dirname(output);
  const ext = path.extname(output);
  const scratch = path.join(dir, `.${path.basename(output, ext)}.${crypto.randomBytes(6).toString('hex')}.part${ext}`);
  try {
    const result = await make(scratch);
    await fsp.rename(scratch, output);
    return result;
  } catch (err) {
    await fsp.rm(scratch, { force: true });
    throw err;
  }
}

/** Size of a file, or 0 when it does not exist (ffmpeg exits 0 without writing when no frame came). */
export async function sizeOf(file: string): Promise<number> {
  try {
    return (await fsp.stat(file)).size;
  } catch {
    return 0;
  }
}
