import fs from 'node:fs';
import path from 'node:path';
import { z } from 'zod';
import type { Config } from '../../config';
import { MediaCommandFailed, runMediaTool } from '../clips/media/ffmpeg-run';
import { decodeAllTimeoutS } from '../clips/media/limits';
import { tradeLanguageModel } from './trade-lm';

/** One word as a recognizer heard it: milliseconds from the start of the sound, confidence as given. */
export interface RecognizedWord {
  word: string;
  startMs: number;
  endMs: number;
  confidence: number;
}

/** How one recognition runs. */
export interface RecognizeOptions {
  /** Length of the sound, seconds: sets the wall-clock bound. */
  durationS?: number;
  signal?: AbortSignal;
}

/**
 * An offline speech recognizer: a program on this machine that reads a 16 kHz mono 16-bit PCM
 * WAV file and says which words it heard when. Nothing leaves the machine.
 */
export interface Recognizer {
  /** For the log and the docs: "pocketsphinx" or the command's program. */
  readonly name: string;
  /** Why it cannot run here (not installed, model missing), or null when it can. */
  unavailableBecause(): string | null;
  recognize(wavPath: string, options?: RecognizeOptions): Promise<{ words: RecognizedWord[] }>;
}

/** Debian's pocketsphinx (package `pocketsphinx`; the model is `pocketsphinx-en-us`). */
export const POCKETSPHINX_BIN = '/usr/bin/pocketsphinx_continuous';

/**
 * Wall-clock bound of one recognition, seconds. pocketsphinx took 2.1 s for 7.6 s of speech on
 * two busy cores (a third of real time); decoding every frame's bound (two minutes plus three
 * times the length) leaves room for a machine ten times slower. Our rule of thumb.
 */
export function recognizeTimeoutS(durationS: number): number {
  return decodeAllTimeoutS(durationS);
}

/** The recognizer the configuration names: SPEECH_COMMAND's, else pocketsphinx with SPEECH_MODEL_DIR and SPEECH_LM. */
export function recognizerFromConfig(speech: Config['speech']): Recognizer {
  return speech.command ? commandRecognizer(speech.command, speech.searchPath) : pocketsphinxRecognizer(speech.modelDir, { lm: speech.lm });
}

/**
 * For an admin (`/api/health`): the recognizer the configuration names, and whether it can run
 * here; `why` says what is missing (or that SPEECH=off) when it cannot.
 */
export function recognizerStatus(speech: Config['speech']): { name: string; available: boolean; why: string | null } {
  const recognizer = recognizerFromConfig(speech);
  const why = speech.enabled ? recognizer.unavailableBecause() : 'SPEECH=off: clips are not listened to';
  return { name: recognizer.name, available: why === null, why };
}

// ---------------------------------------------------------------------------------------------
// pocketsphinx

/** The files of Debian's en-us model inside `modelDir`. */
export function pocketsphinxModel(modelDir: string) {
  return {
    hmm: path.join(modelDir, 'en-us'),
    lm: path.join(modelDir, 'en-us.lm.bin'),
    dict: path.join(modelDir, 'cmudict-en-us.dict'),
  };
}

/**
 * Which language model pocketsphinx listens with: Debian's general US English trigram model
 * ("general"), or our trade model of workshop talk and spoken figures ("trade", trade-lm.ts),
 * made from our own corpus (with the general model's commonest words as a background) and
 * pronounced with Debian's dictionary.
 */
export type SpeechLanguageModel = 'general' | 'trade';

/**
 * pocketsphinx_continuous over Debian's generic US English model (acoustic model, trigram
 * language model and CMU dictionary), or with our trade language model and its dictionary in
 * place of the general ones (`lm: 'trade'`). With `-time yes` it prints, per utterance, the
 * hypothesis and then one line per word: `word start end confidence` (seconds from the start of
 * the file).
 */
export function pocketsphinxRecognizer(modelDir: string, options: { lm?: SpeechLanguageModel; bin?: string } = {}): Recognizer {
  const model = pocketsphinxModel(modelDir);
  const bin = options.bin ?? POCKETSPHINX_BIN;
  const trade = options.lm === 'trade';
  return {
    name: 'pocketsphinx',
    unavailableBecause() {
      if (!isExecutable(bin)) return `${bin} is not installed (Debian package "pocketsphinx")`;
      const missing = Object.values(model).find((file) => !fs.existsSync(file));
      return missing ? `the speech model ${missing} is missing (Debian package "pocketsphinx-en-us")` : null;
    },
    async recognize(wavPath, options = {}) {
      // The trade model is made from the corpus on first use (about a second), then cached.
      const { lm, dict } = trade ? tradeLanguageModel(model) : model;
      const { stdout } = await runMediaTool(
        bin,
        ['-infile', wavPath, '-time', 'yes', '-hmm', model.hmm, '-lm', lm, '-dict', dict, '-samprate', '16000'],
        { what: 'recognise the speech in the clip', signal: options.signal, limits: { timeoutS: recognizeTimeoutS(options.durationS ?? 0) } },
      );
      return { words: parsePocketsphinxTimes(stdout.toString('utf8')) };
    },
  };
}

// A word line: the word (maybe "hundred(4)", "<sil>"), its start and end in seconds, its confidence.
const WORD_LINE = /^(\S+) (\d+(?:\.\d+)?) (\d+(?:\.\d+)?) (-?\d+(?:\.\d+)?(?:e[-+]?\d+)?)$/i;

/**
 * The words of pocketsphinx_continuous's `-time yes` output, in order. Hypothesis lines (the
 * utterance as plain words) carry no numbers and are skipped; markers and alternates are kept
 * as printed (the reader removes them).
 */
export function parsePocketsphinxTimes(stdout: string): RecognizedWord[] {
  const words: RecognizedWord[] = [];
  for (const line of stdout.split(/\r?\n/)) {
    const m = WORD_LINE.exec(line.trim());
    if (!m) continue;
    const start = Number(m[2]);
    const end = Number(m[3]);
    words.push({ word: m[1]!, startMs: Math.round(start * 1000), endMs: Math.max(Math.round(start * 1000), Math.round(end * 1000)), confidence: Number(m[4]) });
  }
  return words;
}

// ---------------------------------------------------------------------------------------------
// Another recognizer: SPEECH_COMMAND

const commandWordSchema = z.union([
  z.object({ word: z.string(), start: z.number().nonnegative(), end: z.number().nonnegative(), confidence: z.number().optional() }),
  z.object({ word: z.string(), startMs: z.number().nonnegative(), endMs: z.number().nonnegative(), confidence: z.number().optional() }),
]);
const commandOutputSchema = z.union([z.object({ words: z.array(commandWordSchema) }), z.array(commandWordSchema)]);

/**
 * A recognizer run as a command (no shell): `argv` with `{wav}` replaced by the file (or the file
 * added last when no argument names it). It prints JSON on standard output: `{ "words": [{
 * "word", "start", "end", "confidence" }] }` with times in seconds (or `startMs`/`endMs`), or the
 * bare array; a missing confidence counts as 1.
 */
export function commandRecognizer(argv: readonly string[], searchPath = ''): Recognizer {
  const [program = '', ...rest] = argv;
  const resolveProgram = () => findProgram(program, searchPath);
  return {
    name: path.basename(program),
    unavailableBecause() {
      return resolveProgram() ? null : `SPEECH_COMMAND's program "${program}" is not installed or not executable`;
    },
    async recognize(wavPath, options = {}) {
      const named = rest.some((a) => a.includes('{wav}'));
      const args = named ? rest.map((a) => a.replaceAll('{wav}', wavPath)) : [...rest, wavPath];
      const what = 'recognise the speech in the clip';
      const { stdout } = await runMediaTool(resolveProgram() ?? program, args, {
        what,
        signal: options.signal,
        limits: { timeoutS: recognizeTimeoutS(options.durationS ?? 0) },
      });
      let json: unknown;
      try {
        json = JSON.parse(stdout.toString('utf8'));
      } catch {
        throw new MediaCommandFailed(`Could not ${what}: SPEECH_COMMAND did not print JSON.`, stdout.toString('utf8').slice(0, 2000), 0);
      }
      const parsed = commandOutputSchema.safeParse(json);
      if (!parsed.success) throw new MediaCommandFailed(`Could not ${what}: SPEECH_COMMAND printed JSON that is not a list of timed words.`, parsed.error.message.slice(0, 2000), 0);
      const list = Array.isArray(parsed.data) ? parsed.data : parsed.data.words;
      return {
        words: list.map((w) => {
          const startMs = Math.round('startMs' in w ? w.startMs : w.start * 1000);
          const endMs = Math.max(startMs, Math.round('endMs' in w ? w.endMs : w.end * 1000));
          return { word: w.word, startMs, endMs, confidence: w.confidence ?? 1 };
        }),
      };
    },
  };
}

/** The program's path: as given when it names a file, else found in `searchPath` (PATH); null when not executable. */
function findProgram(program: string, searchPath: string): string | null {
  if (program === '') return null;
  if (program.includes('/')) return isExecutable(program) ? path.resolve(program) : null;
  for (const dir of searchPath.split(path.delimiter)) {
    const file = path.join(dir || '.', program);
    if (isExecutable(file)) return file;
  }
  return null;
}

function isExecutable(file: string): boolean {
  try {
    fs.accessSync(file, fs.constants.X_OK);
    return fs.statSync(file).isFile();
  } catch {
    return false;
  }
}
