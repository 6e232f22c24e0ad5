// `npm run bench:evidence`: how well clips' evidence is read, on the held-out set of invented
// narrated clips in scripts/lib/evidence-set.ts (no test uses them, nothing is tuned on them).
// Prints figures beside their goals and exits 0 whether or not the goals are met (it measures);
// a crash exits non-zero. The clips are built in a temporary folder and removed afterwards.
// 1. Spoken readings proposed with the right value within ±1.5 s of when the figure was said
//    (the product's path: ffmpeg takes the 16 kHz sound out of the MP4, the configured recognizer
//    listens, words are cleaned as for readers, `findSpokenFigures` with the clip builder's
//    units): goal ≥ 80 %.
// 2. False proposals (matching no spoken reading) per minute of talk: goal ≤ 1.
// 3. Displayed values read right (`readDisplay`: same text, time overlapping when shown): goal
//    ≥ 95 %; values read that were never held (quick changes, misreadings) are counted too.
// 4. Listening speed, audio seconds per recognition wall second, total and per speaking rate:
//    goal ≥ 3× real time on this machine; display reading speed likewise (no goal).
// Two controls, printed apart from the figures: the parser on the script's own words (a perfect
// recognizer), and the recognizer on the same narration without the noise.
import fsp from 'node:fs/promises';
import os from 'node:os';
import path from 'node:path';
import { Fraction } from '../shared/measure/exact';
import { convertExact, type AnyUnit } from '../shared/measure/quantities';
import { findSpokenFigures, type SpokenFigure, type TimedWord } from '../shared/speech/spoken-figures';
import { loadConfig } from '../server/config';
import { cleanWord } from '../server/features/speech/captions';
import { displayReaderStatus, readDisplay, type DisplayReading } from '../server/features/speech/display-reader';
import { extractSpeechWav } from '../server/features/speech/listen.job';
import { recognizerFromConfig, type RecognizedWord } from '../server/features/speech/recognizer';
import {
  buildClip,
  evidenceSetUnavailableBecause,
  FRAME,
  HELD_OUT_CLIPS,
  QUICK_S,
  rateCheck,
  registerOptions,
  SPEAKING_RATES,
  TARGET_SNR_DB,
  VIDEO_NOISE,
  type BuiltClip,
  type ExpectedFigure,
  type PlacedReading,
  type PlacedValue,
} from './lib/evidence-set';

/** How far from when the figure was said a proposal may start, seconds (as the listening tests allow). */
const WINDOW_S = 1.5;
const GOALS = { readingsPct: 80, falsePerMinute: 1, displayPct: 95, listenSpeed: 3 } as const;

const log = (s: string) => process.stderr.write(`[bench:evidence] ${s}\n`);
const pct = (n: number, d: number) => (d ? (100 * n) / d : 0);
const met = (ok: boolean) => (ok ? 'met' : 'NOT met');
const s1 = (x: number) => x.toFixed(1);

/** A recognizer's words as readers get them (as `wordsForReaders` does from the database), in seconds. */
function wordsForReading(words: readonly RecognizedWord[]): TimedWord[] {
  const out: TimedWord[] = [];
  for (const w of words) {
    const word = cleanWord(w.word);
    if (word === null) continue;
    out.push({ word, start: w.startMs / 1000, end: w.endMs / 1000, confidence: Math.min(1, Math.max(0, Number(w.confidence))) });
  }
  return out;
}

/** Exact equality of two decimal texts in two units of one quantity; false across quantities. */
function sameQuantity(a: string, aUnit: AnyUnit, b: string, bUnit: AnyUnit): boolean {
  try {
    return convertExact(new Fraction(a), aUnit, bUnit).equals(new Fraction(b));
  } catch {
    return false;
  }
}

/** Whether a proposal holds the expected figure: same kind, equal values (exactly, after converting units). */
function holds(figure: SpokenFigure, expected: ExpectedFigure): boolean {
  if (figure.kind === 'value' && expected.kind === 'value') return sameQuantity(figure.value, figure.unit, expected.value, expected.unit);
  if (figure.kind === 'bracket' && expected.kind === 'bracket') {
    return sameQuantity(figure.passes, figure.unit, expected.passes, expected.unit) && sameQuantity(figure.stops, figure.unit, expected.stops, expected.unit);
  }
  return false;
}

function expectedText(e: ExpectedFigure): string {
  return e.kind === 'value' ? `${e.value} ${e.unit}` : `${e.passes}|${e.stops} ${e.unit}`;
}

function figureText(f: SpokenFigure): string {
  return f.kind === 'value' ? `${f.value} ${f.unit}${f.feel ? ` (${f.feel})` : ''}` : `${f.passes}|${f.stops} ${f.unit}`;
}

interface ReadingOutcome {
  clip: BuiltClip;
  placed: PlacedReading;
  hit: SpokenFigure | null;
  heard: string;
  near: SpokenFigure[];
}

interface ListenOutcome {
  clip: BuiltClip;
  recognizeS: number;
  readings: ReadingOutcome[];
  falseProposals: SpokenFigure[];
  proposals: number;
}

/**
 * Scores one clip's proposals: each reading takes the first unused proposal holding its figure
 * that starts within WINDOW_S of when the figure was said; proposals left over are false.
 */
function scoreSpeech(clip: BuiltClip, words: TimedWord[], proposals: SpokenFigure[], recognizeS: number): ListenOutcome {
  const used = new Set<SpokenFigure>();
  const readings: ReadingOutcome[] = clip.readings.map((placed) => {
    const hit = proposals.find((p) => !used.has(p) && Math.abs(p.start - placed.startS) <= WINDOW_S && holds(p, placed.reading.expected)) ?? null;
    if (hit) used.add(hit);
    const heard = words
      .filter((w) => w.end >= placed.startS - 0.5 && w.start <= placed.endS + 0.5)
      .map((w) => w.word)
      .join(' ');
    const near = proposals.filter((p) => p !== hit && p.start <= placed.endS + WINDOW_S && p.end >= placed.startS - WINDOW_S);
    return { clip, placed, hit, heard, near };
  });
  return { clip, recognizeS, readings, falseProposals: proposals.filter((p) => !used.has(p)), proposals: proposals.length };
}

interface DisplayOutcome {
  clip: BuiltClip;
  readS: number;
  frames: number;
  fps: number;
  held: { value: PlacedValue; read: DisplayReading | null; overlapping: DisplayReading[] }[];
  spurious: DisplayReading[];
  quickProposed: number;
}

const overlaps = (r: DisplayReading, v: PlacedValue) => r.startMs < v.endS * 1000 && r.endMs > v.startS * 1000;

/** Scores one clip's display: a held value is read when a value with its text overlaps its time; other values read are spurious. */
function scoreDisplay(clip: BuiltClip, values: DisplayReading[], readS: number, frames: number, fps: number): DisplayOutcome {
  const matched = new Set<DisplayReading>();
  const held = clip.shown
    .filter((v) => !v.quick)
    .map((value) => {
      const read = values.find((r) => r.text === value.text && overlaps(r, value)) ?? null;
      if (read) matched.add(read);
      return { value, read, overlapping: values.filter((r) => overlaps(r, value)) };
    });
  const spurious = values.filter((r) => !matched.has(r));
  const quick = clip.shown.filter((v) => v.quick);
  const quickProposed = spurious.filter((r) => quick.some((q) => r.text === q.text && overlaps(r, q))).length;
  return { clip, readS, frames, fps, held, spurious, quickProposed };
}

/** Runs `work` over `items`, at most `limit` at once, keeping their order. */
async function pool<T, R>(items: readonly T[], limit: number, work: (item: T, index: number) => Promise<R>): Promise<R[]> {
  const results = new Array<R>(items.length);
  let next = 0;
  const lanes = Array.from({ length: Math.min(limit, items.length) }, async () => {
    while (next < items.length) {
      const i = next++;
      results[i] = await work(items[i]!, i);
    }
  });
  await Promise.all(lanes);
  return results;
}

function table(rows: string[][]): string {
  const widths = rows[0]!.map((_, c) => Math.max(...rows.map((r) => (r[c] ?? '').length)));
  return rows.map((r) => r.map((cell, c) => (c === r.length - 1 ? cell : cell.padEnd(widths[c]!))).join('  ')).join('\n');
}

/** `--lm trade|general`: pocketsphinx's language model for this run (else SPEECH_LM). */
function lmFlag(argv: readonly string[]): 'trade' | 'general' | null {
  const at = argv.indexOf('--lm');
  if (at < 0) return null;
  const value = argv[at + 1];
  if (value !== 'trade' && value !== 'general') throw new Error('--lm takes "trade" or "general"');
  return value;
}

async function main() {
  const config = loadConfig();
  const lm = lmFlag(process.argv.slice(2));
  if (lm) config.speech.lm = lm;
  log(`language model: ${config.speech.lm}`);
  const recognizer = recognizerFromConfig(config.speech);
  const missing = evidenceSetUnavailableBecause() ?? recognizer.unavailableBecause() ?? displayReaderStatus().why;
  if (missing) throw new Error(`cannot measure here: ${missing}`);

  const work = await fsp.mkdtemp(path.join(os.tmpdir(), 'benchproof-bench-evidence-'));
  const started = performance.now();
  try {
    log('checking the speaking rates…');
    const rates = await rateCheck(work);
    log(`building ${HELD_OUT_CLIPS.length} held-out clips in ${work} (festival, noise, ffmpeg; two at a time)…`);
    const clips = await pool(HELD_OUT_CLIPS, 2, async (spec, i) => {
      const dir = path.join(work, spec.name);
      await fsp.mkdir(dir);
      const clip = await buildClip(spec, i, dir);
      log(`  built ${spec.name}: ${clip.durationS} s, ${clip.readings.length} readings, ${clip.shown.filter((v) => !v.quick).length} displayed values`);
      return clip;
    });
    const buildS = (performance.now() - started) / 1000;

    // Listening, one clip at a time as the worker does, nothing else of ours running.
    const loadBefore = os.loadavg()[0]!;
    const listened: ListenOutcome[] = [];
    for (const clip of clips) {
      const wav = path.join(path.dirname(clip.file), 'listen.wav');
      await extractSpeechWav(clip.file, wav, { container: 'mp4', durationS: clip.durationS });
      const t0 = performance.now();
      const { words } = await recognizer.recognize(wav, { durationS: clip.durationS });
      const recognizeS = (performance.now() - t0) / 1000;
      const timed = wordsForReading(words);
      const proposals = findSpokenFigures(timed, registerOptions(clip.spec.register));
      const outcome = scoreSpeech(clip, timed, proposals, recognizeS);
      listened.push(outcome);
      log(`  listened to ${clip.spec.name} in ${s1(recognizeS)} s: ${outcome.readings.filter((r) => r.hit).length}/${clip.readings.length} readings, ${outcome.falseProposals.length} false`);
    }

    const loadAfter = os.loadavg()[0]!;

    // Control: the same narration without noise, straight to the recognizer.
    const quiet: ListenOutcome[] = [];
    for (const clip of clips) {
      const t0 = performance.now();
      const { words } = await recognizer.recognize(clip.cleanSoundFile, { durationS: clip.durationS });
      const recognizeS = (performance.now() - t0) / 1000;
      const timed = wordsForReading(words);
      quiet.push(scoreSpeech(clip, timed, findSpokenFigures(timed, registerOptions(clip.spec.register)), recognizeS));
    }
    log(`  control without noise: ${quiet.flatMap((l) => l.readings).filter((x) => x.hit).length}/${quiet.flatMap((l) => l.readings).length} readings`);

    // Display reading, one clip at a time.
    const displays: DisplayOutcome[] = [];
    for (const clip of clips) {
      if (!clip.region) continue;
      const scratch = path.join(path.dirname(clip.file), 'frames');
      await fsp.mkdir(scratch);
      const t0 = performance.now();
      const { values, frames, fps } = await readDisplay(clip.file, { region: clip.region, frame: FRAME, durationS: clip.durationS, container: 'mp4', scratch });
      const readS = (performance.now() - t0) / 1000;
      await fsp.rm(scratch, { recursive: true, force: true });
      const outcome = scoreDisplay(clip, values, readS, frames, fps);
      displays.push(outcome);
      log(`  read the display of ${clip.spec.name} in ${s1(readS)} s: ${outcome.held.filter((h) => h.read).length}/${outcome.held.length} values, ${outcome.spurious.length} spurious`);
    }

    // The parser on the script's own words (festival's, perfectly timed): what a perfect recognizer would give.
    const scripted = clips.map((clip) => {
      const words = clip.scriptWords.map((w) => ({ ...w, confidence: 1 }));
      return scoreSpeech(clip, words, findSpokenFigures(words, registerOptions(clip.spec.register)), 0);
    });

    report({ rates, clips, listened, scripted, quiet, displays, load: [loadBefore, loadAfter], buildS, recognizerName: recognizer.name, totalS: (performance.now() - started) / 1000 });
  } finally {
    await fsp.rm(work, { recursive: true, force: true });
  }
}

function report(r: {
  rates: Awaited<ReturnType<typeof rateCheck>>;
  clips: BuiltClip[];
  listened: ListenOutcome[];
  scripted: ListenOutcome[];
  quiet: ListenOutcome[];
  /** One-minute load average before and after listening: other work on the machine slows recognition. */
  load: [number, number];
  displays: DisplayOutcome[];
  buildS: number;
  recognizerName: string;
  totalS: number;
}) {
  const out: string[] = [];
  const say = (s = '') => out.push(s);
  const readings = r.listened.flatMap((l) => l.readings);
  const hits = readings.filter((x) => x.hit).length;
  const falses = r.listened.flatMap((l) => l.falseProposals.map((p) => ({ clip: l.clip, p })));
  const audioS = r.clips.reduce((s, c) => s + c.durationS, 0);
  const recognizeS = r.listened.reduce((s, l) => s + l.recognizeS, 0);
  const falsePerMinute = falses.length / (audioS / 60);
  const held = r.displays.flatMap((d) => d.held);
  const heldRead = held.filter((h) => h.read).length;
  const spurious = r.displays.reduce((s, d) => s + d.spurious.length, 0);
  const quickShown = r.clips.reduce((s, c) => s + c.shown.filter((v) => v.quick).length, 0);
  const quickProposed = r.displays.reduce((s, d) => s + d.quickProposed, 0);
  const videoS = r.displays.reduce((s, d) => s + d.clip.durationS, 0);
  const displayS = r.displays.reduce((s, d) => s + d.readS, 0);
  const speed = audioS / recognizeS;
  const snrs = r.clips.map((c) => c.snr.achievedDb);

  say('bench:evidence — held-out set (invented; no test uses it): scripts/lib/evidence-set.ts');
  say(`recognizer: ${r.recognizerName}; ${os.cpus().length} cores; ${r.clips.length} clips, ${s1(audioS)} s of narrated audio (${s1(audioS / 60)} min); ${readings.length} spoken readings; ${held.length} displayed values held 1–3 s and ${quickShown} flashed for ${QUICK_S} s`);
  say(
    `speaking rates (duration stretch → the same sentence's length): ${r.rates.map((x) => `${x.stretch} → ${x.usedS.toFixed(2)} s`).join(', ')}; ` +
      `festival's Duration_Stretch alone gives ${r.rates.map((x) => x.durationStretchOnlyS.toFixed(2)).join(' / ')} s (the HTS voice ignores it, so hts_engine -r = 1/stretch sets the rate)`,
  );
  say(
    `workshop noise (brown rumble, 50 Hz hum and harmonics, hiss): target ${TARGET_SNR_DB} dB SNR, achieved ${Math.min(...snrs).toFixed(2)}–${Math.max(...snrs).toFixed(2)} dB ` +
      `(speech RMS over spoken stretches / noise RMS over the clip), ${r.clips.reduce((s, c) => s + c.snr.clippedSamples, 0)} clipped samples; ` +
      `video noise alls=${VIDEO_NOISE} temporal on ${r.clips.filter((c) => c.spec.display?.videoNoise).length} display clips`,
  );
  say();
  say('FIGURES');
  say(`  spoken readings proposed right within ±${WINDOW_S} s: ${hits}/${readings.length} = ${s1(pct(hits, readings.length))} %   goal ≥ ${GOALS.readingsPct} %: ${met(pct(hits, readings.length) >= GOALS.readingsPct)}`);
  say(`  false proposals: ${falses.length} in ${s1(audioS / 60)} min of talk = ${falsePerMinute.toFixed(2)} per minute   goal ≤ ${GOALS.falsePerMinute}: ${met(falsePerMinute <= GOALS.falsePerMinute)}`);
  say(`  displayed values read right: ${heldRead}/${held.length} = ${s1(pct(heldRead, held.length))} %   goal ≥ ${GOALS.displayPct} %: ${met(pct(heldRead, held.length) >= GOALS.displayPct)}`);
  say(`  spurious display values: ${spurious} (of them ${quickProposed} from the ${quickShown} values flashed under 0.5 s)`);
  say(`  listening speed: ${s1(audioS)} s of audio in ${s1(recognizeS)} s of recognition = ${speed.toFixed(2)}× real time   goal ≥ ${GOALS.listenSpeed}×: ${met(speed >= GOALS.listenSpeed)} (load average ${r.load[0].toFixed(1)} before, ${r.load[1].toFixed(1)} after, on ${os.cpus().length} cores)`);
  say(`  display reading speed: ${s1(videoS)} s of video in ${s1(displayS)} s = ${(videoS / displayS).toFixed(2)}× real time (frames at ${r.displays[0]?.fps ?? '?'} fps, no goal)`);
  const scriptHits = r.scripted.flatMap((l) => l.readings).filter((x) => x.hit).length;
  const scriptFalse = r.scripted.reduce((s, l) => s + l.falseProposals.length, 0);
  const quietReadings = r.quiet.flatMap((l) => l.readings);
  const quietHits = quietReadings.filter((x) => x.hit).length;
  const quietFalse = r.quiet.reduce((s, l) => s + l.falseProposals.length, 0);
  say('CONTROLS (not the figures above)');
  say(`  the parser alone, on the script's own words (a perfect recognizer): ${scriptHits}/${readings.length} readings right, ${scriptFalse} false proposals`);
  say(
    `  the recognizer on the same narration without noise (clean WAV): ${quietHits}/${quietReadings.length} = ${s1(pct(quietHits, quietReadings.length))} % right, ` +
      `${quietFalse} false (${(quietFalse / (audioS / 60)).toFixed(2)} per minute), ${(audioS / r.quiet.reduce((s, l) => s + l.recognizeS, 0)).toFixed(2)}× real time`,
  );
  say();
  say('BY SPEAKING RATE');
  const rateRows = [['stretch', 'readings right', 'false', 'audio s', 'recognition s', 'speed', 'without noise: right, false']];
  for (const stretch of SPEAKING_RATES) {
    const ls = r.listened.filter((l) => l.clip.spec.stretch === stretch);
    const rs = ls.flatMap((l) => l.readings);
    const a = ls.reduce((s, l) => s + l.clip.durationS, 0);
    const w = ls.reduce((s, l) => s + l.recognizeS, 0);
    const h = rs.filter((x) => x.hit).length;
    const qs = r.quiet.filter((l) => l.clip.spec.stretch === stretch);
    const qh = qs.flatMap((l) => l.readings).filter((x) => x.hit).length;
    const qf = qs.reduce((s, l) => s + l.falseProposals.length, 0);
    rateRows.push([String(stretch), `${h}/${rs.length} (${s1(pct(h, rs.length))} %)`, String(ls.reduce((s, l) => s + l.falseProposals.length, 0)), s1(a), s1(w), `${(a / w).toFixed(2)}×`, `${qh}/${rs.length}, ${qf}`]);
  }
  say(indent(table(rateRows)));
  say();
  say('BY CLIP');
  const clipRows = [['clip', 'stretch', 'register', 'SNR dB', 'readings right', 'false', 'display read', 'spurious']];
  for (const l of r.listened) {
    const d = r.displays.find((x) => x.clip === l.clip);
    clipRows.push([
      l.clip.spec.name,
      String(l.clip.spec.stretch),
      l.clip.spec.register.instruments.join('+'),
      l.clip.snr.achievedDb.toFixed(2),
      `${l.readings.filter((x) => x.hit).length}/${l.readings.length}`,
      String(l.falseProposals.length),
      d ? `${d.held.filter((h) => h.read).length}/${d.held.length}${d.clip.spec.display?.videoNoise ? ' (video noise)' : ''}` : '-',
      d ? String(d.spurious.length) : '-',
    ]);
  }
  say(indent(table(clipRows)));
  say();
  const misses = readings.filter((x) => !x.hit);
  say(`MISSED SPOKEN READINGS (${misses.length})`);
  if (misses.length) {
    const rows = [['id', 'clip', 'stretch', 'at s', 'form', 'expected', 'said', 'heard (cleaned words)', 'proposed near']];
    for (const m of misses) {
      rows.push([
        m.placed.reading.id,
        m.clip.spec.name,
        String(m.clip.spec.stretch),
        s1(m.placed.startS),
        m.placed.reading.form,
        expectedText(m.placed.reading.expected),
        `"${m.placed.reading.figure}"`,
        `"${m.heard}"`,
        m.near.map((p) => `${figureText(p)} @${s1(p.start)}`).join('; ') || '-',
      ]);
    }
    say(indent(table(rows)));
  }
  say();
  say(`FALSE PROPOSALS (${falses.length})`);
  if (falses.length) {
    const rows = [['clip', 'at s', 'proposed', 'from words', 'what was said there']];
    for (const { clip, p } of falses) {
      const there = [...clip.readings.map((x) => ({ text: x.sentence, startS: x.startS - 3, endS: x.endS })), ...clip.talk].find((x) => p.start <= x.endS + 0.5 && p.end >= x.startS - 0.5);
      rows.push([clip.spec.name, s1(p.start), figureText(p), `"${p.words}"`, there ? `"${there.text}"` : '(noise)']);
    }
    say(indent(table(rows)));
  }
  say();
  const missedValues = r.displays.flatMap((d) => d.held.filter((h) => !h.read).map((h) => ({ d, h })));
  say(`MISSED DISPLAY VALUES (${missedValues.length})`);
  if (missedValues.length) {
    const rows = [['clip', 'shown', 'from–to s', 'read there instead']];
    for (const { d, h } of missedValues) {
      rows.push([d.clip.spec.name, h.value.text, `${s1(h.value.startS)}–${s1(h.value.endS)}`, h.overlapping.map((x) => `${x.text} @${s1(x.startMs / 1000)}–${s1(x.endMs / 1000)}`).join('; ') || '(nothing)']);
    }
    say(indent(table(rows)));
  }
  const spuriousRows = r.displays.flatMap((d) => d.spurious.map((x) => [d.clip.spec.name, x.text, `${s1(x.startMs / 1000)}–${s1(x.endMs / 1000)}`, x.confidence.toFixed(2)]));
  say();
  say(`SPURIOUS DISPLAY VALUES (${spuriousRows.length})`);
  if (spuriousRows.length) say(indent(table([['clip', 'read', 'from–to s', 'confidence'], ...spuriousRows])));
  say();
  say(`(clips built in ${s1(r.buildS)} s; whole bench ${s1(r.totalS)} s)`);
  console.log(out.join('\n'));
}

const indent = (s: string) => s.replace(/^/gm, '  ');

main().catch((err: unknown) => {
  console.error(err);
  process.exit(1);
});
