/**
 * The trade language model: a small trigram model of how the workshop talks, for pocketsphinx
 * (`SPEECH_LM=trade`), made here from a corpus we generate ourselves.
 *
 * Corpus. Invented by us, deterministic (seeded): (a) the ways the trade says figures that
 * `findSpokenFigures` (shared/speech/spoken-figures.ts) reads — thou, tenths, "and N tenths",
 * "point five six four two", millimetres, inches, microns, feeler blades that slide or won't go,
 * cc, psi, bar, torque, degrees — with many sampled numbers, in carrier phrases ("the depth
 * reads …", "… on the second journal"); and (b) ordinary workshop talk written by us (tools,
 * parts, steps, small talk, counts without units such as "eight bolts" or "cylinder four"), so
 * that ordinary talk is not forced into figures. No recorded or published text is used; the only
 * outside data are the unigram probabilities of Debian's general model (below).
 *
 * Estimator. Interpolated Witten–Bell smoothing (Witten & Bell 1991, as described by Chen &
 * Goodman 1998; written from memory): p(w|h) = (c(h,w) + T(h)·p(w|h′)) / (c(h) + T(h)), where
 * T(h) is how many different words followed h and h′ is h without its first word. Our corpus is
 * narrow, so each order then hands a fixed share (`flatten`) to the order below: p = (1 − μ)·p_WB
 * + μ·p(w|h′). The unigrams are add-one over the corpus's words, mixed with the unigram
 * probabilities of the commonest words of Debian's general model (read from its binary file, see
 * `generalUnigrams`), so ordinary words our corpus lacks stay possible. It is written as an ARPA
 * backoff model: each seen n-gram keeps its probability, and each history's backoff weight is
 * (1 − Σ p(w|h)) / (1 − Σ p(w|h′)) over the words seen after h, so every conditional
 * distribution sums to one. Values are log10, as ARPA wants.
 *
 * Dictionary. Only the model's words, pronounced as in Debian's cmudict-en-us.dict (every
 * variant), plus a few of our own: "thou" is also TH AW, as the trade says it for "thousandth".
 *
 * The files are made on first use (about a second) in a cache folder named by the generator's
 * version, its options and the general model's files, written atomically (temporary file, then rename).
 */
import crypto from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';

/** Bump when the corpus, the estimator or the dictionary rules change: it names the cache folder. */
export const TRADE_LM_VERSION = 1;

// ---------------------------------------------------------------------------------------------
// Seeded choices

/** mulberry32: a small seeded generator, uniform in [0, 1). */
export function seededRandom(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

type Rand = () => number;
const pick = <T>(rand: Rand, items: readonly T[]): T => items[Math.floor(rand() * items.length)]!;
const int = (rand: Rand, lo: number, hi: number) => lo + Math.floor(rand() * (hi - lo + 1));

// ---------------------------------------------------------------------------------------------
// Numbers in words

const ONES = ['zero', 'one', 'two', 'three', 'four', 'five', 'six', 'seven', 'eight', 'nine'];
const TEENS = ['ten', 'eleven', 'twelve', 'thirteen', 'fourteen', 'fifteen', 'sixteen', 'seventeen', 'eighteen', 'nineteen'];
const TENS = ['', '', 'twenty', 'thirty', 'forty', 'fifty', 'sixty', 'seventy', 'eighty', 'ninety'];

function under100(n: number): string {
  if (n < 10) return ONES[n]!;
  if (n < 20) return TEENS[n - 10]!;
  const t = TENS[Math.floor(n / 10)]!;
  return n % 10 ? `${t} ${ONES[n % 10]}` : t;
}

/** A cardinal in words, 0…999999: "five hundred sixty four" (British "and" when `and`). */
export function cardinal(n: number, and = false): string {
  if (n < 100) return under100(n);
  if (n < 1000) {
    const rest = n % 100;
    const head = `${ONES[Math.floor(n / 100)]} hundred`;
    return rest ? `${head}${and ? ' and' : ''} ${under100(rest)}` : head;
  }
  const rest = n % 1000;
  const head = `${cardinal(Math.floor(n / 1000))} thousand`;
  return rest ? `${head}${and && rest < 100 ? ' and' : ''} ${cardinal(rest, and)}` : head;
}

/** Digit-group talk for 100…999: "five sixty four", "one oh five". */
function groups(n: number): string {
  const rest = n % 100;
  return `${ONES[Math.floor(n / 100)]} ${rest < 10 ? `oh ${ONES[rest]}` : under100(rest)}`;
}

/** Digits one by one, zero as "oh" or "zero". */
function digits(s: string, rand: Rand): string {
  const zero = rand() < 0.75 ? 'oh' : 'zero';
  return [...s].map((d) => (d === '0' ? zero : ONES[Number(d)]!)).join(' ');
}

/** A whole number as people say it: cardinal mostly, digit groups for some hundreds. */
function whole(n: number, rand: Rand): string {
  if (n >= 100 && n < 1000 && rand() < 0.35) return groups(n);
  return cardinal(n, rand() < 0.15);
}

/** "N point d d d": a whole part (maybe none) and decimal digits said one by one. */
function decimal(rand: Rand, wholeMax: number, places: number): string {
  const w = int(rand, 0, wholeMax);
  let frac = '';
  for (let i = 0; i < places; i++) frac += String(int(rand, 0, 9));
  const head = w === 0 ? pick(rand, ['', '', 'oh ', 'zero ']) : `${whole(w, rand)} `;
  return `${head}point ${digits(frac, rand)}`;
}

// ---------------------------------------------------------------------------------------------
// The trade's figures

const MM = ['millimeters', 'millimetres', 'millimeters', 'mil'];
const MM_ONE = ['millimeter', 'millimetre'];

/** One figure as said, in words (sampled). */
function figure(rand: Rand): string {
  const n = () => int(rand, 1, 30);
  switch (int(rand, 0, 22)) {
    case 0:
      return `${cardinal(n())} ${pick(rand, ['thou', 'thou', 'thou', 'thous', 'thousandths', 'mils'])}`;
    case 1:
      return `${cardinal(int(rand, 0, 12))} point ${ONES[int(rand, 1, 9)]} thou`;
    case 2:
      return `${cardinal(int(rand, 1, 9))} thou and ${cardinal(int(rand, 1, 9))} tenths`;
    case 3:
      return pick(rand, [`${cardinal(int(rand, 1, 9))} tenths`, `${cardinal(int(rand, 2, 9))} tenths of a thou`, 'half a thou', 'a thou', 'half a tenth', `${cardinal(n())} thou and a half`]);
    case 4:
    case 5: {
      const x = int(rand, 100, 999);
      return `${whole(x, rand)} and ${cardinal(int(rand, 1, 9))} tenths`;
    }
    case 6:
    case 7:
      return `${pick(rand, ['', 'oh ', 'zero '])}point ${digits(String(int(rand, 1000, 9999)).padStart(4, '0'), rand)}${pick(rand, ['', '', ' inches', ' inch'])}`;
    case 8:
      return `${decimal(rand, 3, int(rand, 1, 4))} ${pick(rand, ['inches', 'inch', 'inches'])}`;
    case 9:
      return pick(rand, ['one inch', 'an inch and a half', `${cardinal(int(rand, 2, 12))} inches`, `${cardinal(int(rand, 1, 6))} and a half inches`, `${cardinal(n())} thousandths of an inch`]);
    case 10:
    case 11:
      return `${decimal(rand, 99, int(rand, 1, 3))} ${pick(rand, MM)}`;
    case 12:
      return pick(rand, [`${cardinal(int(rand, 2, 150))} ${pick(rand, MM)}`, `one ${pick(rand, MM_ONE)}`, `${cardinal(int(rand, 2, 9))} hundredths of a millimeter`, `${cardinal(int(rand, 1, 60))} microns`, `${cardinal(int(rand, 10, 40))} and ${cardinal(int(rand, 1, 9))} tenths ${pick(rand, MM)}`]);
    case 13:
    case 14: {
      const a = int(rand, 1, 25);
      const b = a + int(rand, 1, 3);
      const unit = pick(rand, ['thou', 'thou', 'thou', 'thousandths']);
      const pass = pick(rand, ['slides', 'slides', 'goes', 'drags', 'goes in', 'slides in', 'fits', 'passes']);
      const stop = pick(rand, ["won't go", "won't go", "doesn't go", 'stops', 'is tight', "won't enter", 'binds', "won't fit"]);
      const join = pick(rand, [', ', ' and ', ' but ', ', ', ' then ']);
      const bladeA = rand() < 0.3 ? ` ${pick(rand, ['blade', 'feeler', 'leaf'])}` : '';
      const secondUnit = rand() < 0.7 ? ` ${unit}` : '';
      return rand() < 0.85
        ? `${cardinal(a)} ${unit}${bladeA} ${pass}${join}${cardinal(b)}${secondUnit} ${stop}`
        : `${cardinal(b)} ${unit} ${stop}${join}${cardinal(a)}${secondUnit} ${pass}`;
    }
    case 15: {
      const a = int(rand, 5, 40);
      const b = a + int(rand, 1, 3);
      const two = (x: number) => digits(String(x).padStart(2, '0'), rand);
      return `point ${two(a)} ${pick(rand, ['goes', 'slides', 'drags'])}, point ${two(b)} ${pick(rand, ["won't go", "doesn't go", 'stops'])}`;
    }
    case 16:
      return `${cardinal(n())} ${pick(rand, ['thou', 'thou blade'])} ${pick(rand, ['slides', 'drags', 'goes', 'slides in', "won't go", 'is tight'])}`;
    case 17: {
      const cc = rand() < 0.6 ? `${cardinal(int(rand, 10, 90))} and ${cardinal(int(rand, 1, 9))} tenths` : decimal(rand, 90, 1);
      return `${cc} c c`;
    }
    case 18:
      return pick(rand, [
        `${cardinal(int(rand, 20, 200))} ${pick(rand, ['psi', 'psi', 'p s i', 'pounds per square inch'])}`,
        `${decimal(rand, 12, 1)} bar`,
        `${cardinal(int(rand, 2, 12))} bar`,
        `${cardinal(int(rand, 100, 900))} kilopascals`,
      ]);
    case 19:
      return pick(rand, [
        `${cardinal(int(rand, 10, 120))} ${pick(rand, ['foot pounds', 'foot pounds', 'pound feet'])}`,
        `${cardinal(int(rand, 10, 250))} newton ${pick(rand, ['meters', 'metres'])}`,
        `${cardinal(int(rand, 20, 150))} inch pounds`,
      ]);
    case 20:
      return pick(rand, [
        `${cardinal(int(rand, 2, 120))} degrees`,
        `${cardinal(int(rand, 15, 110))} degrees ${pick(rand, ['celsius', 'fahrenheit', 'c'])}`,
        `${decimal(rand, 30, 1)} degrees`,
      ]);
    case 21:
      return pick(rand, [`${decimal(rand, 30, 1)} seconds`, `${cardinal(int(rand, 8, 12))} point ${ONES[int(rand, 0, 9)]} to one`, `${cardinal(int(rand, 8, 11))} and a half to one`]);
    default:
      return `${pick(rand, ['minus ', 'plus or minus '])}${cardinal(int(rand, 1, 5))} thou`;
  }
}

const CARRIERS = [
  'the depth reads', 'depth reads', 'the bore reads', 'bore reads', 'it reads', 'that reads', 'reads', 'i get', "i've got", 'call it',
  "that's", "it's", 'we have', "we're at", 'it comes to', 'it comes out at', 'it measures', 'measures', 'the gap is', 'gap is',
  'clearance is', 'the clearance is', 'end float is', 'run out is', 'the run out is', 'ring gap', 'the ring gap is', 'rotor height',
  'deck height', 'the deck height is', 'piston to wall is', 'the journal is', 'front journal', 'the rear journal reads', 'the main journal reads',
  'the pin reads', 'crank pin', 'the crank pin reads', 'valve lash is', 'lash is', 'the shim is', 'shim', 'backlash is', 'the chamber takes',
  'chamber takes', 'dish takes', 'the dish takes', 'it holds', 'torque it to', 'set it to', 'tighten to', 'the gauge says',
  'gauge says', 'the gauge reads', 'pressure is', 'oil pressure is', 'boost is', 'compression is', 'compression on number three is',
  'the micrometer says', 'the mic says', 'on the mic', 'on the caliper', 'caliper says', 'the bore gauge shows', 'feeler', 'the feeler',
  'with the feelers', 'the blade', 'timing is', 'advance is', 'the ratio is', 'temperature is', 'water temp is', 'it took', 'okay so',
  'right', 'and', 'so', 'now', 'this one', 'next one', 'number two', 'the second one', 'top of the bore', 'bottom of the bore',
];

const AFTERS = [
  'on the second journal', 'on the first journal', 'on the third journal', 'at the top', 'at the bottom', 'at the skirt', 'across the thrust face',
  'which is fine', 'within spec', 'still in spec', 'in tolerance', 'so that is good', 'so we are good', 'that is a bit tight', 'a little loose',
  'right on', 'on the nose', 'near enough', 'all round', 'at ninety degrees', 'on this side', 'on the other side', 'on number one',
  'on number four', 'on the intake', 'on the exhaust', 'cold', 'hot', 'at idle', 'just there', 'again', 'same as before',
];

// ---------------------------------------------------------------------------------------------
// Ordinary workshop talk (ours)

const TALK = [
  "okay let's get started", 'right so today we are building the bottom end', 'this is the block back from the machine shop',
  "let's clean it up first", 'give it a good wash with hot soapy water', 'blow out all the oil galleries', 'the bores look really nice',
  'the cross hatch is good', "we'll check the mains first", 'put the bearing shells in', 'make sure the tangs line up',
  'wipe the journals clean', 'a bit of assembly lube on there', 'drop the crank in', 'careful with the thrust washers',
  'the caps go on in order', 'number one at the front', 'tighten the bolts in three stages', 'start from the middle and work out',
  'the crank turns nice and free', 'now the pistons', 'check the ring gaps first', 'file the ring to size', 'stagger the ring gaps',
  'compress the rings and tap it in', 'use the handle of the hammer', "don't force it", 'the rod goes on the journal',
  'put some oil on the threads', 'torque the rod nuts', 'turn it over by hand', 'it feels smooth', 'that one is a bit stiff',
  'let me check that again', 'hang on a second', 'where did i put the torque wrench', 'pass me the ten millimeter socket',
  'a thirteen mil spanner', 'the half inch drive ratchet', 'we need a longer extension', 'get the breaker bar', 'grab the rubber mallet',
  'where is the feeler gauge', 'the outside micrometer', 'the dial bore gauge', 'set the mic to the standard', 'zero the dial indicator',
  'the magnetic base', 'a clean rag please', 'some brake cleaner', 'the parts washer', 'the engine stand', 'the hoist is over there',
  'put it on the bench', 'lay the parts out on the tray', 'bag and tag everything', 'take a photo before you strip it',
  'the head is off', 'pull the valves out', 'the spring compressor', 'the valve seats need a cut', 'lap the valves in',
  'check the head for warp', 'use the straight edge', 'the gasket surface is clean', 'a new head gasket', 'the head bolts are stretch bolts',
  'we replace them every time', 'torque angle after that', 'ninety degrees more', 'the cam goes in next', 'line up the timing marks',
  'the chain and the guides', 'new chain guides', 'the water pump', 'the thermostat housing', 'the oil pump pickup', 'the sump gasket',
  'a thin bead of sealant', 'let it cure overnight', 'fill it with oil', 'prime the oil system', 'crank it without plugs',
  'we have oil pressure', 'put the plugs in', 'fire it up', 'it runs nice and smooth', 'let it warm up', 'check for leaks',
  'there is a small leak at the back', "it's the rear main seal", 'that is the customer car', 'the car comes in on monday',
  'parts should arrive tomorrow', 'the supplier sent the wrong gasket', 'order another one', 'we are waiting on the pistons',
  'the invoice is on the desk', 'how long will this take', 'about two hours', 'maybe three hours', 'half an hour', 'ten minutes',
  "we'll finish it after lunch", 'time for a coffee', 'put the kettle on', 'good morning', 'thanks mate', 'cheers', 'see you tomorrow',
  'nice work', 'that looks good', 'that is not right', 'try it again', 'what do you think', 'i think so', 'i am not sure', 'yes', 'no',
  'okay', 'alright', 'got it', 'hold this for me', 'can you hand me that', 'over here', 'just there', 'a bit more', 'stop there',
  'eight bolts on the sump', 'six bolts on the flywheel', 'four studs', 'two dowels', 'cylinder four', 'cylinder one',
  'number three rod', 'the second ring', 'the top ring', 'the oil control ring', 'twelve bolts in total', 'three of them are longer',
  'a two inch pipe', 'a ten millimeter socket', 'a five pound hammer', 'the ninety degree elbow', 'nineteen sixty five',
  'it was built in nineteen seventy two', 'the engine has a hundred thousand miles on it', 'about forty thousand miles',
  'the bike is from two thousand and four', 'the radiator is full', 'the fan belt is loose', 'the alternator works',
  'the battery is flat', 'charge the battery', 'check the fuses', 'the wiring is a mess', 'the starter motor', 'the clutch is slipping',
  'the gearbox comes out', 'the drive shaft', 'the rear axle', 'the brakes need bleeding', 'new brake pads', 'the discs are worn',
  'the calipers are seized', 'the suspension bushes', 'the shock absorbers', 'wheel bearings', 'the steering rack',
  'the exhaust manifold', 'the turbo', 'the cooler', 'the fuel pump', 'the injectors', 'the carburetor', 'set the float height',
  'adjust the idle', 'the timing light', 'the distributor', 'the spark plugs are black', 'it is running rich', 'lean it off a bit',
  'measure the bore in two directions', 'take three readings', 'the top the middle and the bottom', 'write it on the sheet',
  'record it in the log', 'take a reading', 'the next reading', 'the same again', 'check it twice', 'measure twice cut once',
  'the machinist said it was fine', 'send it back to the machine shop', 'the bore needs honing', 'oversize pistons',
  'the crank has been ground', 'under size bearings', 'the rods were sized again', 'the flywheel was skimmed', 'balance the assembly',
  'clean the threads with a tap', 'chase the threads', 'blow the holes out', 'the dowel is stuck', 'use some heat', 'penetrating oil',
  'it came loose', 'the bolt snapped', 'drill it out', 'an easy out', 'a new stud', 'thread locker', 'copper grease', 'the torque spec',
  'look it up in the manual', 'the workshop manual says', 'the spec sheet', 'the numbers look good', 'everything is in spec',
  'we are nearly done', 'last step', 'clean up the bench', 'sweep the floor', 'put the tools away', 'lock up', 'that will do for today',
  'the oil is warm now', 'let it sit for a minute', 'wait for it to cool down', 'it is too hot to touch', 'mind your fingers',
  'wear your glasses', 'gloves on', 'the light is on the left', 'turn the light on', 'i can not see', 'move the lamp',
  'the camera is rolling', 'is this recording', 'start the video', 'we are live', 'hello everyone', 'welcome back to the channel',
  'in this video we rebuild the engine', 'let me show you', 'you can see here', 'look at this', 'as you can see', 'have a look at that',
  'this is the old one', 'this is the new one', 'compare them side by side', 'quite a difference', 'not much wear', 'some scoring',
  'a bit of pitting', 'the surface is smooth', 'rough on this side', 'polish it with fine paper', 'four hundred grit', 'scotch pad',
  'the press', 'press the bearing in', 'press the pin out', 'heat the rod end', 'freeze the pin', 'drop it in', 'it is in',
  'the gudgeon pin', 'the clips', 'make sure the clip is seated', 'the arrow points to the front', 'the mark faces the front',
  'the oil holes line up', 'the notch goes to the cam side', 'the piston rings are marked top', 'the writing faces up',
];

const CHAT = [
  'hmm', 'uh', 'um', 'well', 'so', 'right', 'okay', 'yeah', 'now', 'and then', 'alright then', 'let me see', 'let me think', 'you know',
];

/** Counts and times without units, which must stay talk. */
function countTalk(rand: Rand): string {
  const n = cardinal(int(rand, 2, 16));
  return pick(rand, [
    `${n} bolts`, `${n} nuts`, `${n} studs`, `${n} washers`, `cylinder ${cardinal(int(rand, 1, 8))}`, `number ${cardinal(int(rand, 1, 8))}`,
    `bolt ${cardinal(int(rand, 1, 10))}`, `journal ${cardinal(int(rand, 1, 5))}`, `${n} minutes`, `${n} hours`, `give it ${n} seconds`,
    `about ${n} minutes`, `${n} of them`, `we need ${n}`, `step ${cardinal(int(rand, 1, 12))}`, `page ${cardinal(int(rand, 5, 300))}`,
    `${n} o'clock`, `half past ${cardinal(int(rand, 1, 12))}`, `ten to ${cardinal(int(rand, 1, 12))}`, `a ${cardinal(int(rand, 8, 19))} mil socket`,
    `a ${cardinal(int(rand, 2, 6))} inch pipe`, `${cardinal(int(rand, 1, 4))} more to go`, `the ${pick(rand, ['first', 'second', 'third', 'fourth', 'last'])} one`,
  ]);
}

/**
 * The training sentences, lower case, words separated by single spaces. Deterministic for a seed.
 * About half figure talk (a figure in a carrier phrase, often with talk before or after) and half
 * ordinary talk and counts.
 */
export function tradeCorpus(seed = 1, sentences = 24000, figureShare = 0.5): string[] {
  const rand = seededRandom(seed);
  const out: string[] = [];
  for (let i = 0; i < sentences; i++) {
    const r = rand();
    let s: string;
    if (r < figureShare) {
      const lead = rand() < 0.8 ? `${pick(rand, CARRIERS)} ` : '';
      const after = rand() < 0.3 ? ` ${pick(rand, AFTERS)}` : '';
      const before = rand() < 0.15 ? `${pick(rand, CHAT)} ` : '';
      s = `${before}${lead}${figure(rand)}${after}`;
    } else if (r < figureShare + (1 - figureShare) * 0.76) {
      s = rand() < 0.15 ? `${pick(rand, CHAT)} ${pick(rand, TALK)}` : pick(rand, TALK);
    } else {
      s = countTalk(rand);
    }
    out.push(normaliseSentence(s));
  }
  return out;
}

function normaliseSentence(s: string): string {
  return s
    .toLowerCase()
    .replace(/[^a-z' ]+/g, ' ')
    .replace(/\s+/g, ' ')
    .trim();
}

// ---------------------------------------------------------------------------------------------
// The estimator

export const BOS = '<s>';
export const EOS = '</s>';

/** An ARPA backoff model: per order, n-gram (words joined by spaces) → log10 probability and backoff weight. */
export interface BackoffModel {
  /** The words the model predicts (with </s>, without <s>). */
  vocabulary: string[];
  grams: Map<string, { logProb: number; logBackoff: number | null }>[];
}

/**
 * Interpolated Witten–Bell trigram (see the header), as a backoff model. `minCount` drops
 * trigrams seen fewer times (the backoff weights are computed after dropping, so the model still
 * normalises).
 */
export function estimateTrigramModel(
  sentences: readonly string[],
  options: { minTrigramCount?: number; background?: ReadonlyMap<string, number>; backgroundWeight?: number; flatten?: number } = {},
): BackoffModel {
  const minTri = options.minTrigramCount ?? 1;
  const background = options.background ?? new Map<string, number>();
  const lambda = background.size ? (options.backgroundWeight ?? 0.5) : 0;
  // counts[n] maps "w1 … wn" → count, for n = 1…3 (index 0 unused).
  const counts: Map<string, number>[] = [new Map(), new Map(), new Map(), new Map()];
  const add = (m: Map<string, number>, k: string) => m.set(k, (m.get(k) ?? 0) + 1);
  for (const s of sentences) {
    const words = s.split(' ').filter(Boolean);
    if (words.length === 0) continue;
    const toks = [BOS, ...words, EOS];
    for (let i = 1; i < toks.length; i++) {
      add(counts[1]!, toks[i]!);
      add(counts[2]!, `${toks[i - 1]} ${toks[i]}`);
      if (i >= 2) add(counts[3]!, `${toks[i - 2]} ${toks[i - 1]} ${toks[i]}`);
    }
    // <s> then a first word has no trigram of its own; the bigram covers it.
  }
  const V = counts[1]!.size;
  let N = 0;
  for (const c of counts[1]!.values()) N += c;
  const vocabulary = [...new Set([...counts[1]!.keys(), ...background.keys()])].filter((w) => w !== BOS).sort();

  // Per history: total count and number of different followers.
  const history = (order: number) => {
    const h = new Map<string, { total: number; types: number; followers: string[] }>();
    for (const [k, c] of counts[order]!) {
      const cut = k.lastIndexOf(' ');
      const hist = k.slice(0, cut);
      const e = h.get(hist) ?? { total: 0, types: 0, followers: [] };
      e.total += c;
      e.types += 1;
      e.followers.push(k.slice(cut + 1));
      h.set(hist, e);
    }
    return h;
  };
  const hist2 = history(2);
  const hist3 = history(3);

  // Add-one over the corpus's words, mixed with the background unigrams when given.
  const p1 = (w: string) => {
    const c = counts[1]!.get(w);
    return (1 - lambda) * (c === undefined ? 0 : (c + 1) / (N + V)) + lambda * (background.get(w) ?? 0);
  };
  // Witten–Bell, then a fixed share `flatten` of each level given to the level below.
  const mu = options.flatten ?? 0;
  const p2 = (h: string, w: string) => {
    const e = hist2.get(h);
    if (!e) return p1(w);
    return (1 - mu) * (((counts[2]!.get(`${h} ${w}`) ?? 0) + e.types * p1(w)) / (e.total + e.types)) + mu * p1(w);
  };
  const p3 = (h1: string, h2: string, w: string) => {
    const e = hist3.get(`${h1} ${h2}`);
    if (!e) return p2(h2, w);
    return (1 - mu) * (((counts[3]!.get(`${h1} ${h2} ${w}`) ?? 0) + e.types * p2(h2, w)) / (e.total + e.types)) + mu * p2(h2, w);
  };

  const grams: BackoffModel['grams'] = [new Map(), new Map(), new Map(), new Map()];
  grams[1]!.set(BOS, { logProb: -99, logBackoff: null });
  for (const w of vocabulary) grams[1]!.set(w, { logProb: Math.log10(p1(w)), logBackoff: null });
  for (const k of counts[2]!.keys()) {
    const [h, w] = k.split(' ') as [string, string];
    grams[2]!.set(k, { logProb: Math.log10(p2(h, w)), logBackoff: null });
  }
  for (const [k, c] of counts[3]!) {
    if (c < minTri) continue;
    const [h1, h2, w] = k.split(' ') as [string, string, string];
    grams[3]!.set(k, { logProb: Math.log10(p3(h1, h2, w)), logBackoff: null });
  }

  // Backoff weights: (1 − Σ kept p(w|h)) / (1 − Σ kept p(w|h′)).
  const kept = (order: number) => {
    const by = new Map<string, string[]>();
    for (const k of grams[order]!.keys()) {
      const cut = k.lastIndexOf(' ');
      const h = k.slice(0, cut);
      const list = by.get(h) ?? [];
      list.push(k.slice(cut + 1));
      by.set(h, list);
    }
    return by;
  };
  for (const [h, ws] of kept(2)) {
    let num = 1;
    let den = 1;
    for (const w of ws) {
      num -= p2(h, w);
      den -= p1(w);
    }
    grams[1]!.get(h)!.logBackoff = Math.log10(num / den);
  }
  for (const [h, ws] of kept(3)) {
    const [h1, h2] = h.split(' ') as [string, string];
    let num = 1;
    let den = 1;
    for (const w of ws) {
      num -= p3(h1, h2, w);
      den -= p2(h2, w);
    }
    grams[2]!.get(h)!.logBackoff = Math.log10(num / den);
  }
  return { vocabulary, grams };
}

/** The model as an ARPA text file (`\data\`, `ngram N=count`, one section per order, `\end\`). */
export function arpaText(model: BackoffModel): string {
  const fmt = (x: number) => x.toFixed(6);
  const lines = ['\\data\\'];
  for (let n = 1; n <= 3; n++) lines.push(`ngram ${n}=${model.grams[n]!.size}`);
  for (let n = 1; n <= 3; n++) {
    lines.push('', `\\${n}-grams:`);
    const keys = [...model.grams[n]!.keys()].sort();
    for (const k of keys) {
      const g = model.grams[n]!.get(k)!;
      lines.push(g.logBackoff === null || n === 3 ? `${fmt(g.logProb)}\t${k}` : `${fmt(g.logProb)}\t${k}\t${fmt(g.logBackoff)}`);
    }
  }
  lines.push('', '\\end\\', '');
  return lines.join('\n');
}

/** P(w | history) of a backoff model, log10 (the standard ARPA reading), history of 0–2 words. */
export function backoffLogProb(model: BackoffModel, history: readonly string[], w: string): number {
  const h = history.slice(-2);
  const key = [...h, w].join(' ');
  const g = model.grams[h.length + 1]!.get(key);
  if (g) return g.logProb;
  if (h.length === 0) return -Infinity;
  const bow = model.grams[h.length]!.get(h.join(' '))?.logBackoff ?? 0;
  return bow + backoffLogProb(model, h.slice(1), w);
}

// ---------------------------------------------------------------------------------------------
// The dictionary

/** Pronunciations of our own, added to cmudict's. */
const EXTRA_PRONUNCIATIONS: Record<string, string[]> = {
  thou: ['TH AW'],
  thous: ['TH AW Z'],
  kilopascals: ['K IH L OW P AE S K AE L Z', 'K IH L AH P AE S K AH L Z'],
  "o'clock": ['AH K L AA K'],
};

/**
 * The dictionary text for `vocabulary`: every cmudict variant of each word (numbered "(2)",
 * "(3)"… as cmudict does) and ours; the words neither knows are returned in `missing`.
 */
export function tradeDictionary(vocabulary: readonly string[], cmudict: string): { text: string; missing: string[] } {
  const wanted = new Set(vocabulary.filter((w) => w !== BOS && w !== EOS));
  const prons = new Map<string, string[]>();
  for (const line of cmudict.split('\n')) {
    const m = /^(\S+?)(?:\(\d+\))?\s+(.+)$/.exec(line.trim());
    if (!m || !wanted.has(m[1]!)) continue;
    const list = prons.get(m[1]!) ?? [];
    const phones = m[2]!.trim().replace(/\s+/g, ' ');
    if (!list.includes(phones)) list.push(phones);
    prons.set(m[1]!, list);
  }
  for (const [w, extra] of Object.entries(EXTRA_PRONUNCIATIONS)) {
    if (!wanted.has(w)) continue;
    const list = prons.get(w) ?? [];
    for (const p of extra) if (!list.includes(p)) list.push(p);
    prons.set(w, list);
  }
  const lines: string[] = [];
  const missing: string[] = [];
  for (const w of [...wanted].sort()) {
    const list = prons.get(w);
    if (!list?.length) {
      missing.push(w);
      continue;
    }
    list.forEach((p, i) => lines.push(`${i === 0 ? w : `${w}(${i + 1})`} ${p}`));
  }
  return { text: `${lines.join('\n')}\n`, missing };
}

// ---------------------------------------------------------------------------------------------
// The files, made once

/** The trade model's files for pocketsphinx. */
export interface TradeModelFiles {
  lm: string;
  dict: string;
}

/** Writes `text` to `file` atomically: a temporary file beside it, then a rename. */
function writeAtomically(file: string, text: string) {
  const tmp = `${file}.${process.pid}.${crypto.randomBytes(4).toString('hex')}.tmp`;
  fs.writeFileSync(tmp, text);
  fs.renameSync(tmp, file);
}

/**
 * The unigram probabilities of Debian's general model (`en-us.lm.bin`, sphinxbase's binary "Trie
 * Language Model" format), of its `top` most likely words: the background that keeps ordinary
 * words our corpus lacks within reach. The layout, as sphinxbase writes it (read from memory of
 * its source and checked on the file): the header text, the order (one byte), the n-gram counts
 * (uint32 each), the quantisation type (int32; 1 = 16-bit, with one table of 65536 floats per
 * probability and backoff of the middle orders and one for the probabilities of the highest),
 * then the unigrams (log probability and backoff as floats in log base 1.0001, and the index of
 * their first bigram), …, and at the end the words, NUL-terminated, in unigram order. Returns an
 * empty map when the file is not laid out so (the checks: the unigrams' sentinel points at most to
 * the last bigram and the probabilities sum to one).
 */
export function generalUnigrams(lmBinPath: string, top: number): Map<string, number> {
  const none = new Map<string, number>();
  let buf: Buffer;
  try {
    buf = fs.readFileSync(lmBinPath);
  } catch {
    return none;
  }
  const header = 'Trie Language Model';
  if (buf.toString('latin1', 0, header.length) !== header) return none;
  let at = header.length;
  const order = buf.readUInt8(at);
  at += 1;
  if (order < 2 || order > 5) return none;
  const counts: number[] = [];
  for (let i = 0; i < order; i++, at += 4) counts.push(buf.readUInt32LE(at));
  const quantType = buf.readInt32LE(at);
  at += 4;
  if (quantType === 1) at += ((order - 2) * 2 + 1) * 65536 * 4;
  else if (quantType !== 0) return none;
  const n = counts[0]!;
  if (at + (n + 1) * 12 > buf.length) return none;
  const lastNext = buf.readUInt32LE(at + n * 12 + 8);
  if (lastNext > counts[1]! || lastNext < buf.readUInt32LE(at + (n - 1) * 12 + 8)) return none;
  // The words: the last n NUL-terminated strings of the file.
  const words: string[] = [];
  let end = buf.length - 1;
  while (words.length < n && end > at) {
    let begin = end - 1;
    while (begin >= 0 && buf[begin] !== 0) begin--;
    words.push(buf.toString('latin1', begin + 1, end));
    end = begin;
  }
  if (words.length !== n) return none;
  words.reverse();
  const LOG10_BASE = Math.log10(1.0001);
  const probs: [string, number][] = [];
  let total = 0;
  for (let i = 0; i < n; i++) {
    const p = 10 ** (buf.readFloatLE(at + i * 12) * LOG10_BASE);
    total += p;
    if (words[i] !== BOS && /^[a-z'</>]+$/.test(words[i]!)) probs.push([words[i]!, p]);
  }
  if (Math.abs(total - 1) > 0.01) return none;
  probs.sort((a, b) => b[1] - a[1] || (a[0] < b[0] ? -1 : 1));
  return new Map(probs.slice(0, top));
}

/**
 * How the trade model is made (see the header): corpus size and share of figure sentences, the
 * general model's commonest words mixed into the unigrams and their weight, and the share of each
 * order handed to the one below (`flatten`). Chosen on our development clips (invented sentences
 * narrated by festival with workshop noise), never on the benchmark's held-out set.
 */
export const TRADE_LM_OPTIONS = { sentences: 24000, figureShare: 0.5, backgroundWords: 5000, backgroundWeight: 0.5, flatten: 0.6 };

/**
 * The ARPA model and dictionary, made the first time (in `cacheRoot`, by default the system's
 * temporary folder) and reused afterwards: our corpus, mixed at the unigram level with the general
 * model's commonest words (`general.lm`), pronounced from Debian's dictionary (`general.dict`).
 */
export function tradeLanguageModel(general: { lm: string; dict: string }, cacheRoot = os.tmpdir()): TradeModelFiles {
  const stamp = (file: string) => {
    const st = fs.statSync(file, { throwIfNoEntry: false });
    return `${path.resolve(file)}:${st?.size ?? 0}:${st?.mtimeMs ?? 0}`;
  };
  const key = crypto
    .createHash('sha256')
    .update(JSON.stringify([TRADE_LM_VERSION, TRADE_LM_OPTIONS, stamp(general.lm), stamp(general.dict)]))
    .digest('hex')
    .slice(0, 16);
  const dir = path.join(cacheRoot, `benchproof-speech-lm-${key}`);
  const files = { lm: path.join(dir, 'trade.arpa'), dict: path.join(dir, 'trade.dict') };
  if (fs.existsSync(files.lm) && fs.existsSync(files.dict)) return files;

  fs.mkdirSync(dir, { recursive: true });
  const cmudict = fs.readFileSync(general.dict, 'utf8');
  const corpus = tradeCorpus(1, TRADE_LM_OPTIONS.sentences, TRADE_LM_OPTIONS.figureShare);
  const corpusWords = new Set(corpus.flatMap((s) => s.split(' ')));
  // Words nobody can pronounce take their sentences out of the corpus (and out of the background).
  const gone = new Set(tradeDictionary([...corpusWords], cmudict).missing);
  const usable = gone.size ? corpus.filter((s) => !s.split(' ').some((w) => gone.has(w))) : corpus;
  const background = TRADE_LM_OPTIONS.backgroundWords ? generalUnigrams(general.lm, TRADE_LM_OPTIONS.backgroundWords * 2) : new Map<string, number>();
  const unknown = new Set(tradeDictionary([...background.keys()], cmudict).missing);
  const kept = [...background].filter(([w]) => w === EOS || !unknown.has(w)).slice(0, TRADE_LM_OPTIONS.backgroundWords);
  const keptTotal = kept.reduce((t, [, p]) => t + p, 0);
  const model = estimateTrigramModel(usable, {
    background: new Map(kept.map(([w, p]) => [w, p / keptTotal])),
    backgroundWeight: TRADE_LM_OPTIONS.backgroundWeight,
    flatten: TRADE_LM_OPTIONS.flatten,
  });
  const { text: dict } = tradeDictionary(model.vocabulary, cmudict);
  // The dictionary first: the model's presence marks the pair complete.
  writeAtomically(files.dict, dict);
  writeAtomically(files.lm, arpaText(model));
  return files;
}
