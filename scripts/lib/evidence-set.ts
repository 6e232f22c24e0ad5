/**
 * The held-out evidence set of `npm run bench:evidence`, and the builder of its clips.
 *
 * INVENTED and HELD OUT: every sentence, figure and displayed value below was made up for this
 * benchmark and differs from the phrases and values of the tests (tests/server/speech,
 * tests/shared/speech, tests/browser/proposals.browser.test.ts) and of the demo content
 * (content/builds.json "say"/"show"). Nothing here may be used to tune the parser, the recognizer
 * or the display reader; a figure only counts while it stays out of the tests.
 *
 * Each clip is a 640×360 MP4 (H.264 + AAC) built in a temporary folder, deterministically:
 * - Sound: festival's US English voice (cmu_us_slt_arctic_hts) says ordinary workshop talk with
 *   readings in it, at one of three speaking rates; the word timings come from festival itself,
 *   so when each figure was said is known exactly. Workshop noise (brown rumble, mains hum and
 *   its harmonics, fan hiss; seeded) is mixed in at 10 dB signal-to-noise, speech RMS measured
 *   over the spoken stretches only.
 * - Picture: some clips show an instrument's seven-segment display (fonts-dseg) holding values
 *   for 1–3 s each, with bursts of values that change in under half a second (the spindle still
 *   moving: not readings), and some have mild temporal video noise.
 *
 * Speaking rate: festival's `Duration_Stretch` parameter is ignored by HTS voices (the WAV keeps
 * its length; `rateCheck` shows it), so the rate is set with hts_engine's speed option `-r`,
 * which is 1 / stretch; `Duration_Stretch` is set as well for voices that honour it.
 */
import { execFile } from 'node:child_process';
import fs from 'node:fs';
import path from 'node:path';
import { promisify } from 'node:util';
import { quantityOf, unitsOf, type AnyUnit } from '../../shared/measure/quantities';
import type { DisplayRegion } from '../../shared/speech/speech.schema';
import type { FindSpokenFiguresOptions } from '../../shared/speech/spoken-figures';
import { mediaBinaries } from '../../server/features/clips/media/binaries';
import { readWav, writeWav } from './wav';

const run = promisify(execFile);

/** Debian's festival (package festival) with the voice of festvox-us-slt-hts. */
export const FESTIVAL = '/usr/bin/festival';
export const VOICE = 'voice_cmu_us_slt_arctic_hts';
const VOICE_DIR = '/usr/share/festival/voices/us/cmu_us_slt_arctic_hts';
/** Debian's fonts-dseg: the seven-segment face. */
export const SEGMENT_FONT = '/usr/share/fonts/truetype/dseg/DSEG7Classic-Regular.ttf';
const CAPTION_FONT = '/usr/share/fonts/truetype/dejavu/DejaVuSans.ttf';

export const SAMPLE_RATE = 16000;
export const FRAME = { width: 640, height: 360 } as const;
/** Speech to noise, dB, over the spoken stretches. */
export const TARGET_SNR_DB = 10;
/** Speaking rates as duration stretch: under 1 is faster than the voice's own pace. */
export const SPEAKING_RATES = [0.85, 1, 1.25] as const;
export type SpeakingRate = (typeof SPEAKING_RATES)[number];
/** Temporal video noise of the noisy clips (ffmpeg `noise=alls=8:allf=t`), chosen before any run. */
export const VIDEO_NOISE = 8;
/** A burst value is shown this long: under the half second a reading must hold. */
export const QUICK_S = 0.3;

/** What a reading is: a value in a unit, or a feeler bracket (blade that passes, blade that stops). */
export type ExpectedFigure =
  | { kind: 'value'; value: string; unit: AnyUnit }
  | { kind: 'bracket'; passes: string; stops: string; unit: AnyUnit };

/** One reading said in a sentence: `carrier` then `figure`, with ordinary talk before (and maybe after). */
export interface HeldOutReading {
  id: string;
  /** Which spoken form it is, for the tables. */
  form: string;
  before: string;
  /** Words leading into the figure in its sentence ("The front journal reads"); may be empty. */
  carrier: string;
  /** The figure as said, numbers in words. */
  figure: string;
  after?: string;
  expected: ExpectedFigure;
}

/** One value the display holds, with what comes before and after it. */
export interface ShownValue {
  text: string;
  holdS: number;
  /** Blank display after it, seconds (0: the next value replaces it directly). */
  gapAfterS: number;
  /** Values flashed for QUICK_S each just before this one (the display settling). */
  burst?: readonly string[];
}

/** Where and how the display is drawn. */
export interface DisplayStyle {
  name: string;
  box: { x: number; y: number; w: number; h: number };
  /** Background and digit colours (ffmpeg colour syntax), digit size in pixels. */
  background: string;
  digits: string;
  fontSize: number;
}

export interface DisplaySpec {
  style: DisplayStyle;
  videoNoise: boolean;
  startS: number;
  values: readonly ShownValue[];
}

/** The instruments of the clip's invented builder, as units: they set the parser's options. */
export interface Register {
  name: string;
  instruments: readonly AnyUnit[];
}

export interface HeldOutClip {
  name: string;
  stretch: SpeakingRate;
  register: Register;
  readings: readonly HeldOutReading[];
  display?: DisplaySpec;
}

/**
 * The parser's options for a builder with these instruments, by the rule of `spokenFigureOptions`
 * (server/features/speech/speech.service.ts), which reads them from the database: every unit of
 * the quantities the instruments show, and the unit of a bare decimal when the instruments (or
 * their length instruments) agree on one.
 */
export function registerOptions(register: Register): FindSpokenFiguresOptions {
  const own = [...new Set(register.instruments)];
  if (own.length === 0) return {};
  const units = [...new Set(own.flatMap((u) => unitsOf(quantityOf(u))))];
  const lengths = own.filter((u) => quantityOf(u) === 'length');
  const defaultUnit = own.length === 1 ? own[0] : lengths.length === 1 ? lengths[0] : undefined;
  return { units, ...(defaultUnit ? { defaultUnit } : {}) };
}

const INCH_SHOP: Register = { name: 'inch shop (inch micrometer, inch bore gauge)', instruments: ['in'] };
const MIXED_SHOP: Register = { name: 'mixed shop (inch micrometer, metric caliper)', instruments: ['in', 'mm'] };

const GREEN_TOP_LEFT: DisplayStyle = {
  name: 'green, top left',
  box: { x: 40, y: 36, w: 300, h: 110 },
  background: '0x07110a',
  digits: '0x5cff8a',
  fontSize: 58,
};
const AMBER_BOTTOM_RIGHT: DisplayStyle = {
  name: 'amber, bottom right',
  box: { x: 350, y: 214, w: 256, h: 92 },
  background: '0x171106',
  digits: '0xffb21e',
  fontSize: 46,
};

const v = (value: string, unit: AnyUnit): ExpectedFigure => ({ kind: 'value', value, unit });
const b = (passes: string, stops: string, unit: AnyUnit): ExpectedFigure => ({ kind: 'bracket', passes, stops, unit });

/** The invented, held-out clips: 36 readings, 12 at each speaking rate, 27 displayed values. */
export const HELD_OUT_CLIPS: readonly HeldOutClip[] = [
  {
    name: 'crank-mains',
    stretch: 0.85,
    register: INCH_SHOP,
    readings: [
      { id: 'r01', form: 'thou and tenths', before: 'Okay, checking the second journal now.', carrier: 'The front of it reads', figure: 'five hundred forty one and three tenths', after: 'Moving on.', expected: v('541.3', 'thou') },
      { id: 'r05', form: 'and a half thou', before: 'Let me wipe the anvil and the spindle first.', carrier: 'Clearance is', figure: 'seven and a half thou', expected: v('7.5', 'thou') },
      { id: 'r13', form: 'point … inches', before: 'I will lock the thimble before I take the reading.', carrier: 'That comes to', figure: 'point six two five oh inches', after: 'Good.', expected: v('0.6250', 'in') },
      { id: 'r17', form: 'bare point decimal', before: 'Turn the crank a quarter turn clockwise for me.', carrier: 'Now I get', figure: 'point four three seven one', expected: v('0.4371', 'in') },
      { id: 'r21', form: 'decimal millimetres', before: 'There are eight bolts on this cover, and two of them are seized.', carrier: 'The dowel measures', figure: 'twenty two point four one five millimetres', after: 'Write that down.', expected: v('22.415', 'mm') },
      { id: 'r28', form: 'bracket, thou', before: 'Pass me the feeler gauges, the long ones.', carrier: 'End float.', figure: "eight thou goes, nine thou won't go", expected: b('8', '9', 'thou') },
    ],
    display: {
      style: GREEN_TOP_LEFT,
      videoNoise: false,
      startS: 1.5,
      values: [
        { text: '0.4371', holdS: 2.2, gapAfterS: 0 },
        { text: '0.4368', holdS: 1.4, gapAfterS: 2.5 },
        { text: '0.4402', holdS: 2.6, gapAfterS: 3, burst: ['0.43', '0.4', '0.4391'] },
        { text: '118', holdS: 1.2, gapAfterS: 3.5 },
        { text: '0.7813', holdS: 3, gapAfterS: 2 },
        { text: '1.3750', holdS: 1.8, gapAfterS: 0, burst: ['1.37', '1.3'] },
        { text: '0.0094', holdS: 1, gapAfterS: 1 },
      ],
    },
  },
  {
    name: 'cam-followers',
    stretch: 1,
    register: INCH_SHOP,
    readings: [
      { id: 'r02', form: 'thou and tenths', before: 'Right, on to the rear journal.', carrier: 'The rear one reads', figure: 'six hundred twelve and seven tenths', expected: v('612.7', 'thou') },
      { id: 'r06', form: 'whole thou', before: 'That looks a bit worn on the thrust face.', carrier: 'Wear across it is', figure: 'nineteen thou', after: 'Note that.', expected: v('19', 'thou') },
      { id: 'r14', form: 'zero point … inch', before: 'Give it twenty minutes to come down to room temperature.', carrier: 'The follower bore is', figure: 'zero point seven eight one two inch', expected: v('0.7812', 'in') },
      { id: 'r18', form: 'bare point decimal', before: 'Hang on, the phone is going again.', carrier: 'Sorry, the stem reads', figure: 'point eight eight two oh', after: 'Fine, next.', expected: v('0.8820', 'in') },
      { id: 'r22', form: 'decimal millimetres', before: 'The book wants these done up in three stages.', carrier: 'The shim is', figure: 'thirty point oh eight millimetres', expected: v('30.08', 'mm') },
      { id: 'r29', form: 'bracket, thou', before: 'Clean the gauge blades before they go back in the case.', carrier: 'Valve lash.', figure: 'eleven thou slides, twelve thou binds', after: 'That is in the book.', expected: b('11', '12', 'thou') },
    ],
    display: {
      style: GREEN_TOP_LEFT,
      videoNoise: true,
      startS: 2,
      values: [
        { text: '22.415', holdS: 2, gapAfterS: 0 },
        { text: '22.409', holdS: 1.1, gapAfterS: 3 },
        { text: '30.080', holdS: 2.4, gapAfterS: 2.5 },
        { text: '9.972', holdS: 1.6, gapAfterS: 3, burst: ['9.9', '10.01', '9.98'] },
        { text: '63', holdS: 2.9, gapAfterS: 2 },
        { text: '0.152', holdS: 1.3, gapAfterS: 2.5 },
        { text: '41', holdS: 1, gapAfterS: 1 },
      ],
    },
  },
  {
    name: 'rod-bearings',
    stretch: 1.25,
    register: INCH_SHOP,
    readings: [
      { id: 'r03', form: 'digit groups and tenths', before: 'Moving on to the big end caps.', carrier: 'Number one cap reads', figure: 'three eighty nine and four tenths', expected: v('389.4', 'thou') },
      { id: 'r07', form: 'thou and tenths after thou', before: 'I checked this one twice last week.', carrier: 'Oil clearance comes out at', figure: 'nine thou and four tenths', after: 'Hmm, on the loose side.', expected: v('9.4', 'thou') },
      { id: 'r15', form: 'decimal inches', before: 'Swap the anvil for the longer one.', carrier: 'Across the flats it is', figure: 'one point three seven five inches', expected: v('1.375', 'in') },
      { id: 'r36', form: 'bare point decimal', before: 'The point of doing it cold is that nothing has grown.', carrier: 'The pin reads', figure: 'point three three eight one', after: 'Good.', expected: v('0.3381', 'in') },
      { id: 'r23', form: 'decimal millimetres', before: 'Number six main cap comes off after lunch.', carrier: 'The thrust washer is', figure: 'nine point nine seven millimetres', expected: v('9.97', 'mm') },
      { id: 'r30', form: 'bracket, unit on one blade', before: 'Side clearance on the rod now.', carrier: '', figure: "five thou drags, six won't go", after: 'Right.', expected: b('5', '6', 'thou') },
    ],
  },
  {
    name: 'gearbox-shims',
    stretch: 0.85,
    register: MIXED_SHOP,
    readings: [
      { id: 'r04', form: 'digit groups and tenths', before: 'Okay, the layshaft bearing next.', carrier: 'Its outer race reads', figure: 'two fifty and eight tenths', expected: v('250.8', 'thou') },
      { id: 'r08', form: 'decimal thou', before: 'We will swap the bearings if any of these are out.', carrier: 'Runout is', figure: 'two point five thou', after: 'Moving on.', expected: v('2.5', 'thou') },
      { id: 'r16', form: 'and a half inches', before: 'Hold the shaft still while I set the stop.', carrier: 'The spacer is', figure: 'two and a half inches', expected: v('2.5', 'in') },
      { id: 'r19', form: 'oh point … inches', before: 'Cylinder four is next, then the other bank.', carrier: 'Sorry, wrong job. The collar is', figure: 'oh point two one nine inches', after: 'Note that.', expected: v('0.219', 'in') },
      { id: 'r24', form: 'and tenths millimetres', before: 'Now the metric caliper for the housing.', carrier: 'The housing depth is', figure: 'sixty three and two tenths millimetres', expected: v('63.2', 'mm') },
      { id: 'r31', form: 'bracket, millimetres', before: 'Backlash with the metric blades.', carrier: '', figure: 'point one five millimetre slides, point two oh millimetre stops', after: 'Fine, next.', expected: b('0.15', '0.20', 'mm') },
    ],
    display: {
      style: AMBER_BOTTOM_RIGHT,
      videoNoise: false,
      startS: 1,
      values: [
        { text: '0.2500', holdS: 1.5, gapAfterS: 2.5 },
        { text: '0.6251', holdS: 2, gapAfterS: 0 },
        { text: '250', holdS: 1.1, gapAfterS: 3, burst: ['251', '249'] },
        { text: '14.287', holdS: 2.7, gapAfterS: 2.5, burst: ['14.3', '14.29'] },
        { text: '0.0016', holdS: 1.7, gapAfterS: 3 },
        { text: '7', holdS: 1.2, gapAfterS: 2 },
        { text: '88.903', holdS: 2.2, gapAfterS: 1 },
      ],
    },
  },
  {
    name: 'valve-seats',
    stretch: 1,
    register: MIXED_SHOP,
    readings: [
      { id: 'r09', form: 'thousandths', before: 'Seat width on the inlet side.', carrier: 'I make it', figure: 'eighteen thousandths', expected: v('18', 'thou') },
      { id: 'r10', form: 'thousandths of an inch', before: 'Let me find the good light.', carrier: 'The stem is worn by', figure: 'six thousandths of an inch', after: 'That is too much.', expected: v('6', 'thou') },
      { id: 'r20', form: 'tenths of an inch', before: 'Measure the installed height with the rule.', carrier: 'It sits', figure: 'three tenths of an inch', expected: v('0.3', 'in') },
      { id: 'r25', form: 'hundredths of a millimetre', before: 'Now the metric guide.', carrier: 'The guide is out by', figure: 'eight hundredths of a millimetre', after: 'Write that down.', expected: v('0.08', 'mm') },
      { id: 'r32', form: 'bracket with blade word', before: 'Check the spring seat gap with the blades.', carrier: '', figure: "twenty thou leaf enters and twenty two thou won't enter", expected: b('20', '22', 'thou') },
      { id: 'r33', form: 'lone blade', before: 'And the exhaust side.', carrier: 'The blade says', figure: 'ten thou drags', after: 'Good.', expected: v('10', 'thou') },
    ],
    display: {
      style: AMBER_BOTTOM_RIGHT,
      videoNoise: true,
      startS: 1.5,
      values: [
        { text: '0.5413', holdS: 1.9, gapAfterS: 3 },
        { text: '0.6127', holdS: 1, gapAfterS: 0 },
        { text: '0.3894', holdS: 2.3, gapAfterS: 3, burst: ['0.39', '0.388'] },
        { text: '12.700', holdS: 1.5, gapAfterS: 2.5 },
        { text: '95', holdS: 3, gapAfterS: 2.5 },
        { text: '0.0875', holdS: 1.4, gapAfterS: 1, burst: ['0.09', '0.0871'] },
      ],
    },
  },
  {
    name: 'head-and-runout',
    stretch: 1.25,
    register: MIXED_SHOP,
    readings: [
      { id: 'r11', form: 'mils', before: 'Flatness across the head now.', carrier: 'The worst spot is', figure: 'four mils', after: 'Moving on.', expected: v('4', 'thou') },
      { id: 'r12', form: 'tenths', before: 'The straight edge rocks a little here.', carrier: 'It is about', figure: 'four tenths', expected: v('4', 'tenth') },
      { id: 'r26', form: 'microns', before: 'The metric indicator on the liner.', carrier: 'Liner protrusion is', figure: 'forty microns', after: 'Fine, next.', expected: v('40', 'um') },
      { id: 'r27', form: 'zero point millimetres', before: 'Gasket compressed thickness.', carrier: 'It measures', figure: 'zero point six millimetres', expected: v('0.6', 'mm') },
      { id: 'r34', form: 'lone blade that stops', before: 'Try the next blade up.', carrier: 'And', figure: "thirteen thou won't go", after: 'Right.', expected: v('13', 'thou') },
      { id: 'r35', form: 'minus thou and tenths', before: 'The dial indicator on the flywheel.', carrier: 'The runout reads', figure: 'minus one thou and six tenths', expected: v('-1.6', 'thou') },
    ],
  },
];

// ---------------------------------------------------------------------------------------------
// Sound

/** mulberry32: a small seeded generator, so the noise is the same on every run. */
function seeded(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

function rms(x: ArrayLike<number>, spans?: readonly [number, number][]): number {
  let sum = 0;
  let n = 0;
  for (const [from, to] of spans ?? [[0, x.length] as [number, number]]) {
    for (let i = Math.max(0, from); i < Math.min(x.length, to); i++) {
      sum += x[i]! * x[i]!;
      n += 1;
    }
  }
  return n ? Math.sqrt(sum / n) : 0;
}

/**
 * Workshop noise of unit RMS: brown rumble (leaky integral of white noise), 50 Hz mains hum with
 * its second and third harmonics, and a fan's hiss; seeded, so the same on every run.
 */
export function workshopNoise(length: number, seed: number): Float64Array {
  const random = seeded(seed);
  const brown = new Float64Array(length);
  const hiss = new Float64Array(length);
  const hum = new Float64Array(length);
  let level = 0;
  for (let i = 0; i < length; i++) {
    const white = random() * 2 - 1;
    level = 0.995 * level + white;
    brown[i] = level;
    hiss[i] = random() * 2 - 1;
    const t = i / SAMPLE_RATE;
    hum[i] = Math.sin(2 * Math.PI * 50 * t) + 0.5 * Math.sin(2 * Math.PI * 100 * t + 0.3) + 0.25 * Math.sin(2 * Math.PI * 150 * t + 1.1);
  }
  const parts: [Float64Array, number][] = [
    [brown, 1],
    [hum, 0.35],
    [hiss, 0.25],
  ];
  const out = new Float64Array(length);
  for (const [part, weight] of parts) {
    const scale = weight / (rms(part) || 1);
    for (let i = 0; i < length; i++) out[i]! += part[i]! * scale;
  }
  const total = rms(out) || 1;
  for (let i = 0; i < length; i++) out[i]! /= total;
  return out;
}

/** A word festival said, seconds from the start of its sentence's WAV. */
interface SaidWord {
  word: string;
  start: number;
  end: number;
}

/** festival's speed option for a duration stretch (hts_engine `-r`: above 1 is faster). */
function htsSpeed(stretch: number): string {
  return (1 / stretch).toFixed(4);
}

/** The scheme that sets the voice and the speaking rate. */
function voiceScheme(stretch: number, mechanism: 'both' | 'duration-stretch-only' = 'both'): string {
  const lines = [`(${VOICE})`, `(Parameter.set 'Duration_Stretch ${stretch})`];
  if (mechanism === 'both') lines.push(`(set! hts_engine_params (append hts_engine_params (list (list "-r" ${htsSpeed(stretch)}))))`);
  return lines.join('\n');
}

/** Text as a scheme string: festival gets words and punctuation only. */
function schemeString(text: string): string {
  if (/["\\]/.test(text)) throw new Error(`the held-out text "${text}" holds a quote or backslash`);
  return `"${text}"`;
}

/**
 * festival says each sentence at the rate into `<dir>/<name>-<i>.wav` (16 kHz mono) in one
 * process; each sentence's words with their times from festival's own segment timings.
 */
async function saySentences(sentences: readonly string[], stretch: number, dir: string, name: string, mechanism: 'both' | 'duration-stretch-only' = 'both') {
  const script = path.join(dir, `${name}.scm`);
  const wavs = sentences.map((_, i) => path.join(dir, `${name}-${i}.wav`));
  const body = sentences.map(
    (s, i) => `(set! utt (utt.synth (Utterance Text ${schemeString(s)})))
(utt.wave.resample utt ${SAMPLE_RATE})
(utt.save.wave utt ${schemeString(wavs[i]!)} 'riff)
(mapcar (lambda (w) (format t "W ${i} %s %s %s\\n" (item.name w) (item.feat w "R:SylStructure.daughter1.daughter1.segment_start") (item.feat w "R:SylStructure.daughtern.daughtern.segment_end"))) (utt.relation.items utt 'Word))`,
  );
  fs.writeFileSync(script, `${voiceScheme(stretch, mechanism)}\n${body.join('\n')}\n`);
  const { stdout } = await run(FESTIVAL, ['--batch', script], { maxBuffer: 16 * 1024 * 1024, timeout: 300_000 });
  const words: SaidWord[][] = sentences.map(() => []);
  for (const line of stdout.split('\n')) {
    const m = /^W (\d+) (\S+) (\S+) (\S+)$/.exec(line.trim());
    if (!m) continue;
    words[Number(m[1])]!.push({ word: m[2]!, start: Number(m[3]), end: Number(m[4]) });
  }
  return sentences.map((text, i) => {
    const wav = readWav(wavs[i]!);
    if (wav.rate !== SAMPLE_RATE) throw new Error(`festival wrote ${wav.rate} Hz, not ${SAMPLE_RATE}`);
    if (words[i]!.length === 0) throw new Error(`festival gave no word timings for "${text}"`);
    return { text, samples: wav.samples, words: words[i]! };
  });
}

/** The same sentence's length at each speaking rate: by Duration_Stretch alone, and as the clips are made. */
export async function rateCheck(dir: string): Promise<{ stretch: number; durationStretchOnlyS: number; usedS: number }[]> {
  const sentence = 'Checking the tappet clearance on the inlet side before the cover goes back on.';
  const out: { stretch: number; durationStretchOnlyS: number; usedS: number }[] = [];
  for (const stretch of SPEAKING_RATES) {
    const [only] = await saySentences([sentence], stretch, dir, `rate-only-${stretch}`, 'duration-stretch-only');
    const [used] = await saySentences([sentence], stretch, dir, `rate-used-${stretch}`);
    out.push({ stretch, durationStretchOnlyS: only!.samples.length / SAMPLE_RATE, usedS: used!.samples.length / SAMPLE_RATE });
  }
  return out;
}

const norm = (w: string) => w.toLowerCase().replace(/[^a-z']/g, '');

/** Where the figure's words are among the sentence's (the last match), or throws. */
function figureWords(words: readonly SaidWord[], figure: string): { start: number; end: number } {
  const want = figure.split(/[\s,]+/).map(norm).filter(Boolean);
  const have = words.map((w) => norm(w.word));
  for (let i = have.length - want.length; i >= 0; i--) {
    if (want.every((w, j) => have[i + j] === w)) return { start: words[i]!.start, end: words[i + want.length - 1]!.end };
  }
  throw new Error(`festival's words "${have.join(' ')}" do not hold the figure "${want.join(' ')}"`);
}

// ---------------------------------------------------------------------------------------------
// Clips

/** A reading as placed in its clip: when the figure's words were said, seconds. */
export interface PlacedReading {
  reading: HeldOutReading;
  startS: number;
  endS: number;
  /** The whole sentence as said. */
  sentence: string;
}

/** A value as placed on the display; `quick` values change in under half a second (not readings). */
export interface PlacedValue {
  text: string;
  startS: number;
  endS: number;
  quick: boolean;
}

export interface BuiltClip {
  spec: HeldOutClip;
  file: string;
  /** The same narration without noise, 16 kHz mono WAV (a control, not part of the clip). */
  cleanSoundFile: string;
  durationS: number;
  readings: PlacedReading[];
  /** The ordinary talk around the readings, with when it was said. */
  talk: { text: string; startS: number; endS: number }[];
  /** Every word festival said, with its times in the clip (seconds): what a perfect recognizer would hear. */
  scriptWords: { word: string; start: number; end: number }[];
  shown: PlacedValue[];
  region: DisplayRegion | null;
  snr: { targetDb: number; achievedDb: number; speechRms: number; noiseRms: number; clippedSamples: number };
}

/** Pauses between sentences, seconds: 0.5–1.1, seeded per clip. */
function pauses(seed: number): () => number {
  const random = seeded(seed);
  return () => 0.5 + Math.round(random() * 6) / 10;
}

/** The display values laid on the clip's timeline from the display's start. */
function placeValues(display: DisplaySpec): PlacedValue[] {
  const placed: PlacedValue[] = [];
  let at = display.startS;
  for (const value of display.values) {
    for (const text of value.burst ?? []) {
      placed.push({ text, startS: at, endS: at + QUICK_S, quick: true });
      at += QUICK_S;
    }
    placed.push({ text: value.text, startS: at, endS: at + value.holdS, quick: false });
    at += value.holdS + value.gapAfterS;
  }
  return placed.map((p) => ({ ...p, startS: round3(p.startS), endS: round3(p.endS) }));
}

const round3 = (x: number) => Math.round(x * 1000) / 1000;

// Inside drawtext's single quotes an apostrophe cannot be escaped; the texts here are digits and words.
const drawText = (s: string) => s.replace(/'/g, '’').replace(/[\\:%]/g, (c) => `\\${c}`);

/** ffmpeg's video filters: bench colour, a running timer outside the display, the display and its values, maybe noise. */
function videoFilters(spec: HeldOutClip, shown: readonly PlacedValue[]): string {
  const filters: string[] = [];
  if (fs.existsSync(CAPTION_FONT)) {
    filters.push(
      `drawtext=fontfile=${CAPTION_FONT}:text='${drawText(`held-out clip ${spec.name}`)}':x=16:y=h-36:fontsize=18:fontcolor=white:box=1:boxcolor=black@0.6:boxborderw=6`,
      `drawtext=fontfile=${CAPTION_FONT}:text='%{pts\\:hms}':x=w-text_w-16:y=16:fontsize=22:fontcolor=white`,
    );
  }
  const display = spec.display;
  if (display) {
    const { box, background, digits, fontSize } = display.style;
    filters.push(`drawbox=x=${box.x}:y=${box.y}:w=${box.w}:h=${box.h}:color=${background}:t=fill`);
    for (const value of shown) {
      const on = `enable='gte(t,${value.startS})*lt(t,${value.endS})'`;
      // Right-aligned, as instrument displays are.
      filters.push(
        `drawtext=fontfile=${SEGMENT_FONT}:fontsize=${fontSize}:fontcolor=${digits}:text='${drawText(value.text)}':x=${box.x + box.w - 14}-text_w:y=${box.y + box.h / 2}-text_h/2:${on}`,
      );
    }
    if (display.videoNoise) filters.push(`noise=alls=${VIDEO_NOISE}:allf=t`);
  }
  return filters.length ? filters.join(',') : 'null';
}

/**
 * Builds one held-out clip in `dir`: festival says the talk and readings at the clip's rate, the
 * sentences are laid on silence with seeded pauses, workshop noise is mixed in at TARGET_SNR_DB,
 * and ffmpeg draws the picture (display values at their times) and muxes the sound as AAC.
 */
export async function buildClip(spec: HeldOutClip, index: number, dir: string): Promise<BuiltClip> {
  const sentences: { text: string; reading?: HeldOutReading }[] = [];
  for (const r of spec.readings) {
    sentences.push({ text: r.before });
    const lead = r.carrier.trim();
    const said = lead ? `${lead} ${r.figure}.` : `${r.figure.charAt(0).toUpperCase()}${r.figure.slice(1)}.`;
    sentences.push({ text: said, reading: r });
    if (r.after) sentences.push({ text: r.after });
  }
  const said = await saySentences(
    sentences.map((s) => s.text),
    spec.stretch,
    dir,
    `${spec.name}-speech`,
  );

  // Lay the sentences out: one second of noise first, seeded pauses between, one second after.
  const pause = pauses(1000 + index);
  let at = 1;
  const placed: { at: number; samples: Int16Array }[] = [];
  const readings: PlacedReading[] = [];
  const talk: BuiltClip['talk'] = [];
  const speechSpans: [number, number][] = [];
  const scriptWords: BuiltClip['scriptWords'] = [];
  for (const [i, s] of sentences.entries()) {
    const sentence = said[i]!;
    placed.push({ at, samples: sentence.samples });
    for (const w of sentence.words) scriptWords.push({ word: w.word, start: round3(at + w.start), end: round3(at + w.end) });
    const first = sentence.words[0]!;
    const last = sentence.words.at(-1)!;
    speechSpans.push([Math.round((at + first.start) * SAMPLE_RATE), Math.round((at + last.end) * SAMPLE_RATE)]);
    if (s.reading) {
      const w = figureWords(sentence.words, s.reading.figure);
      readings.push({ reading: s.reading, startS: round3(at + w.start), endS: round3(at + w.end), sentence: s.text });
    } else {
      talk.push({ text: s.text, startS: round3(at + first.start), endS: round3(at + last.end) });
    }
    at += sentence.samples.length / SAMPLE_RATE + pause();
  }
  const shown = spec.display ? placeValues(spec.display) : [];
  const durationS = Math.ceil(Math.max(at + 1, (shown.at(-1)?.endS ?? 0) + 1.5));
  const length = Math.round(durationS * SAMPLE_RATE);

  const clean = new Float64Array(length);
  for (const p of placed) {
    const from = Math.round(p.at * SAMPLE_RATE);
    for (let i = 0; i < p.samples.length && from + i < length; i++) clean[from + i]! += p.samples[i]!;
  }
  const speechRms = rms(clean, speechSpans);
  const noise = workshopNoise(length, 7919 * (index + 1));
  const wantNoiseRms = speechRms / 10 ** (TARGET_SNR_DB / 20);
  const mixed = new Int16Array(length);
  const noiseOut = new Float64Array(length);
  let clippedSamples = 0;
  for (let i = 0; i < length; i++) {
    const x = Math.round(clean[i]! + noise[i]! * wantNoiseRms);
    const y = Math.max(-32768, Math.min(32767, x));
    if (y !== x) clippedSamples += 1;
    mixed[i] = y;
    noiseOut[i] = y - clean[i]!;
  }
  // Achieved: speech over its spans against what was added to it (noise, rounding, clipping) over the whole clip.
  const noiseRms = rms(noiseOut);
  const achievedDb = 20 * Math.log10(speechRms / noiseRms);
  const soundFile = path.join(dir, `${spec.name}-sound.wav`);
  writeWav(soundFile, SAMPLE_RATE, mixed);
  const cleanSoundFile = path.join(dir, `${spec.name}-clean.wav`);
  writeWav(cleanSoundFile, SAMPLE_RATE, Int16Array.from(clean, (x) => Math.max(-32768, Math.min(32767, Math.round(x)))));

  const file = path.join(dir, `${spec.name}.mp4`);
  await run(
    mediaBinaries().ffmpeg,
    [
      '-v', 'error', '-y',
      '-f', 'lavfi', '-i', `color=c=0x3b4046:size=${FRAME.width}x${FRAME.height}:rate=30:duration=${durationS}`,
      '-i', soundFile,
      '-filter_complex', `[0:v]${videoFilters(spec, shown)}[v]`,
      '-map', '[v]', '-map', '1:a',
      '-c:v', 'libx264', '-preset', 'veryfast', '-pix_fmt', 'yuv420p',
      '-c:a', 'aac', '-b:a', '128k', '-ar', '48000', '-ac', '1',
      '-t', String(durationS), '-movflags', '+faststart', '-f', 'mp4', file,
    ],
    { timeout: 300_000, maxBuffer: 16 * 1024 * 1024 },
  );
  const box = spec.display?.style.box;
  const region = box ? { x: box.x / FRAME.width, y: box.y / FRAME.height, width: box.w / FRAME.width, height: box.h / FRAME.height } : null;
  return {
    spec,
    file,
    cleanSoundFile,
    durationS,
    readings,
    talk,
    scriptWords,
    shown,
    region,
    snr: { targetDb: TARGET_SNR_DB, achievedDb, speechRms, noiseRms, clippedSamples },
  };
}

/** Why the set cannot be built here (festival, its voice or the font missing), or null. */
export function evidenceSetUnavailableBecause(): string | null {
  if (!fs.existsSync(FESTIVAL)) return `${FESTIVAL} is missing (Debian package festival)`;
  if (!fs.existsSync(VOICE_DIR)) return `${VOICE_DIR} is missing (Debian package festvox-us-slt-hts)`;
  if (!fs.existsSync(SEGMENT_FONT)) return `${SEGMENT_FONT} is missing (Debian package fonts-dseg)`;
  return null;
}
