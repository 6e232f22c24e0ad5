import { spawn } from 'node:child_process';
import crypto from 'node:crypto';
import fs from 'node:fs';
import fsp from 'node:fs/promises';
import path from 'node:path';
import { mediaBinaries } from './binaries';
import { cpuLimitSeconds, FIXED_TIMEOUT_S, memoryLimitBytes } from './limits';

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

/** Bounds of one command; see limits.ts for the defaults. */
export interface RunLimits {
  /** Wall-clock seconds before the command is killed (default FIXED_TIMEOUT_S). */
  timeoutS: number;
  /** Processor seconds, all threads together (RLIMIT_CPU; default: the timeout on every core). */
  cpuSeconds: number;
  /** Address space, bytes (RLIMIT_AS; default memoryLimitBytes()). */
  memoryBytes: number;
}

/** How to run one ffmpeg/ffprobe command. */
export interface RunOptions {
  /** What the command is for, as the end of "Could not …" ("make the web copy"). */
  what: string;
  signal?: AbortSignal;
  limits?: Partial<RunLimits>;
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
const PRLIMIT = '/usr/bin/prlimit';

/**
 * Runs ffmpeg with `args` (no shell). Resolves with its output when it exits 0; otherwise
 * rejects with MediaCommandFailed, or with the signal's reason when aborted (the process is
 * killed and has exited before the promise settles, so callers can delete its output safely).
 *
 * The last argument must be the one output. Every input (`-i`) may be read through the `file`
 * protocol only, so a playlist or reference inside an uploaded file cannot make ffmpeg fetch a
 * URL or open `concat:`/`subfile:` views; the output may use `file`, or `pipe` when it is
 * `pipe:N`/`-`. Inputs are pinned to a demuxer by the callers (`-f` before `-i`) once the
 * probe has named the container. The command runs under the limits (see RunLimits).
 */
export async function runFfmpeg(args: string[], options: RunOptions): Promise<RunResult> {
  return run(mediaBinaries().ffmpeg, ['-hide_banner', '-nostdin', ...ffmpegProtocols(args)], options);
}

/** Like runFfmpeg, for ffprobe: the last argument is the one input, read through `file` only. */
export async function runFfprobe(args: string[], options: RunOptions): Promise<RunResult> {
  const input = args.at(-1);
  if (input === undefined || input.startsWith('-')) throw new RangeError('the last ffprobe argument must be its input');
  return run(mediaBinaries().ffprobe, ['-hide_banner', ...args.slice(0, -1), '-protocol_whitelist', 'file', input], options);
}

/**
 * Runs another media tool (a speech recognizer) under the same limits and timeout as ffmpeg:
 * no shell, the program's arguments as given. Errors are MediaCommandFailed, as for ffmpeg.
 */
export async function runMediaTool(bin: string, args: string[], options: RunOptions): Promise<RunResult> {
  return run(bin, args, options);
}

function ffmpegProtocols(args: string[]): string[] {
  const output = args.at(-1);
  if (output === undefined || (output.startsWith('-') && output !== '-')) throw new RangeError('the last ffmpeg argument must be its output');
  const out: string[] = [];
  for (const arg of args.slice(0, -1)) {
    // An input option: it applies to the `-i` that follows, and to everything that input opens.
    if (arg === '-i') out.push('-protocol_whitelist', 'file');
    out.push(arg);
  }
  const toPipe = output === '-' || output.startsWith('pipe:');
  // An output option before the output name: where the output may be written.
  out.push('-protocol_whitelist', toPipe ? 'pipe' : 'file', output);
  return out;
}

let warnedNoPrlimit = false;

/** The command line that runs `bin` under the CPU and address-space limits, when prlimit is there. */
function withRlimits(bin: string, args: string[], limits: RunLimits): [string, string[]] {
  if (!fs.existsSync(PRLIMIT)) {
    if (!warnedNoPrlimit) {
      warnedNoPrlimit = true;
      process.emitWarning(`${PRLIMIT} (util-linux) is missing: ffmpeg and ffprobe run without CPU and memory limits.`, { code: 'BENCHPROOF_NO_PRLIMIT' });
    }
    return [bin, args];
  }
  // Soft and hard CPU limit alike: the kernel then sends SIGKILL, which ffmpeg cannot catch and
  // turn into an ordinary exit code (it does catch SIGXCPU).
  const cpu = Math.max(1, Math.ceil(limits.cpuSeconds));
  const as = Math.max(1, Math.floor(limits.memoryBytes));
  return [PRLIMIT, [`--cpu=${cpu}`, `--as=${as}`, '--', bin, ...args]];
}

function run(bin: string, args: string[], options: RunOptions): Promise<RunResult> {
  const { signal } = options;
  if (signal?.aborted) return Promise.reject(abortReason(signal));
  const timeoutS = options.limits?.timeoutS ?? FIXED_TIMEOUT_S;
  const limits: RunLimits = {
    timeoutS,
    cpuSeconds: options.limits?.cpuSeconds ?? cpuLimitSeconds(timeoutS),
    memoryBytes: options.limits?.memoryBytes ?? memoryLimitBytes(),
  };
  const [file, argv] = withRlimits(bin, args, limits);
  return new Promise((resolve, reject) => {
    const child = spawn(file, argv, { stdio: ['ignore', 'pipe', 'pipe'], windowsHide: true });
    const out: Buffer[] = [];
    let stderr = '';
    let outLine = '';
    let errLine = '';
    let spawnError: Error | null = null;
    let timedOut = false;
    const onAbort = () => child.kill('SIGKILL');
    signal?.addEventListener('abort', onAbort, { once: true });
    const timer = setTimeout(() => {
      timedOut = true;
      child.kill('SIGKILL');
    }, limits.timeoutS * 1000);

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
    child.on('error', (err) => {
      spawnError = err;
    });
    child.on('close', (code, killedBy) => {
      clearTimeout(timer);
      signal?.removeEventListener('abort', onAbort);
      if (signal?.aborted) return reject(abortReason(signal));
      if (spawnError) {
        const missing = (spawnError as NodeJS.ErrnoException).code === 'ENOENT';
        const why = missing ? `${path.basename(file)} was not found (${file})` : spawnError.message;
        return reject(new MediaCommandFailed(`Could not ${options.what}: ${why}.`, '', null));
      }
      if (timedOut) {
        return reject(new MediaCommandFailed(`Could not ${options.what}: it took longer than ${seconds(limits.timeoutS)} and was stopped.`, stderr.slice(-4000), code));
      }
      if (code === 0) return resolve({ stdout: Buffer.concat(out), stderr });
      // We send SIGKILL only on a timeout or an abort (handled above), so this one came from the
      // kernel: the CPU limit, or the out-of-memory killer.
      const killed = killedBy === 'SIGKILL' || killedBy === 'SIGXCPU';
      const summary = killed
        ? `it was stopped by the system (${killedBy}), most likely for using more than its ${seconds(Math.ceil(limits.cpuSeconds))} of processor time`
        : (summariseStderr(stderr) ?? (killedBy ? `it was stopped (${killedBy})` : `it exited with code ${code}`));
      reject(new MediaCommandFailed(`Could not ${options.what}: ${summary}.`, stderr.slice(-4000), code));
    });
  });
}

function seconds(s: number): string {
  return s >= 1 ? `${Math.round(s)} s` : `${Math.round(s * 1000)} ms`;
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
