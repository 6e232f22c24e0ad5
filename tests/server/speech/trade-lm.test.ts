import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { loadConfig } from '../../../server/config';
import { pocketsphinxModel } from '../../../server/features/speech/recognizer';
import {
  arpaText,
  backoffLogProb,
  BOS,
  cardinal,
  EOS,
  estimateTrigramModel,
  generalUnigrams,
  tradeCorpus,
  tradeDictionary,
  tradeLanguageModel,
  type BackoffModel,
} from '../../../server/features/speech/trade-lm';
import { findSpokenFigures } from '../../../shared/speech/spoken-figures';

const TOY = ['the gap is three thou', 'the gap is four thou', 'three thou slides four thou won\'t go', 'eight bolts on the sump', 'the gap is fine'];

/** Σ over the vocabulary (with </s>, without <s>) of P(w | history), by the ARPA backoff reading. */
function total(model: BackoffModel, history: string[]): number {
  return model.vocabulary.reduce((t, w) => t + 10 ** backoffLogProb(model, history, w), 0);
}

/** A minimal ARPA reader: the header's counts, and each section's entries. */
function readArpa(text: string) {
  const lines = text.split('\n');
  const declared = new Map<number, number>();
  const sections = new Map<number, string[][]>();
  let section = 0;
  for (const line of lines) {
    const count = /^ngram (\d)=(\d+)$/.exec(line);
    if (count) declared.set(Number(count[1]), Number(count[2]));
    const head = /^\\(\d)-grams:$/.exec(line);
    if (head) {
      section = Number(head[1]);
      sections.set(section, []);
    } else if (line === '\\end\\') section = 0;
    else if (section && line.trim()) sections.get(section)!.push(line.split('\t'));
  }
  return { lines, declared, sections };
}

describe('the trade language model estimator (interpolated Witten–Bell, as ARPA backoff)', () => {
  const model = estimateTrigramModel(TOY);
  const flattened = estimateTrigramModel(TOY, { flatten: 0.6, background: new Map([['the', 0.5], ['and', 0.3], [EOS, 0.2]]), backgroundWeight: 0.5 });
  const pruned = estimateTrigramModel(TOY, { minTrigramCount: 2 });

  it('normalises: for seen, unseen and empty histories the probabilities over the vocabulary sum to one', () => {
    const histories = [[], [BOS], ['the'], [BOS, 'the'], ['gap', 'is'], ['three', 'thou'], ['sump'], ['bolts', 'the'], ['four', 'thou']];
    for (const m of [model, flattened, pruned]) {
      for (const h of histories) expect(total(m, h), h.join(' ')).toBeCloseTo(1, 9);
    }
  });

  it('keeps seen trigrams and backs off with the history\'s weight to the lower order for unseen ones', () => {
    const seen = model.grams[3]!.get('gap is three');
    expect(seen).toBeDefined();
    expect(backoffLogProb(model, ['gap', 'is'], 'three')).toBe(seen!.logProb);
    // "is sump" was never seen: bow(gap is) + log P(sump | is), and P(sump | is) = bow(is) + log P(sump).
    const bowGapIs = model.grams[2]!.get('gap is')!.logBackoff!;
    const bowIs = model.grams[1]!.get('is')!.logBackoff!;
    expect(backoffLogProb(model, ['gap', 'is'], 'sump')).toBeCloseTo(bowGapIs + bowIs + model.grams[1]!.get('sump')!.logProb, 12);
    // Seen things are likelier than unseen ones after the same history.
    expect(backoffLogProb(model, ['gap', 'is'], 'three')).toBeGreaterThan(backoffLogProb(model, ['gap', 'is'], 'sump'));
    // Witten–Bell: after "gap is" (3 tokens, 3 types) the backoff mass is 3 / (3 + 3).
    expect(10 ** bowGapIs).toBeCloseTo(0.5, 9);
  });

  it('gives words of the background unigrams only (never in the corpus) some probability', () => {
    expect(flattened.vocabulary).toContain('and');
    expect(backoffLogProb(flattened, ['gap', 'is'], 'and')).toBeGreaterThan(-5);
    expect(model.vocabulary).not.toContain('and');
  });

  it('writes ARPA: \\data\\ counts that match each section, <s> at -99, trigrams without backoff weights', () => {
    const text = arpaText(model);
    const { lines, declared, sections } = readArpa(text);
    expect(lines[0]).toBe('\\data\\');
    expect(lines.at(-2)).toBe('\\end\\');
    for (let n = 1; n <= 3; n++) {
      expect(sections.get(n)!.length).toBe(declared.get(n));
      expect(declared.get(n)).toBe(model.grams[n]!.size);
      for (const entry of sections.get(n)!) {
        expect(entry[1]!.split(' ')).toHaveLength(n);
        expect(Number(entry[0])).toBeLessThanOrEqual(0);
        if (n === 3) expect(entry).toHaveLength(2);
      }
    }
    expect(sections.get(1)!.find((e) => e[1] === BOS)).toEqual(['-99.000000', BOS, expect.stringMatching(/^-?\d+\.\d{6}$/)]);
    expect(sections.get(1)!.find((e) => e[1] === EOS)).toHaveLength(2);
    // Every n-gram's prefix is itself an (n − 1)-gram, as backoff readers expect.
    for (let n = 2; n <= 3; n++) for (const [, k] of sections.get(n)!) expect(model.grams[n - 1]!.has(k!.split(' ').slice(0, -1).join(' '))).toBe(true);
  });
});

describe('the trade corpus', () => {
  const corpus = tradeCorpus(1, 3000);

  it('is the same for the same seed, and lower-case words only', () => {
    expect(tradeCorpus(1, 3000)).toEqual(corpus);
    expect(tradeCorpus(2, 3000)).not.toEqual(corpus);
    for (const s of corpus) expect(s).toMatch(/^[a-z']+( [a-z']+)*$/);
  });

  it('says figures the parser reads, and ordinary counts it leaves alone', () => {
    expect(cardinal(564)).toBe('five hundred sixty four');
    expect(cardinal(105, true)).toBe('one hundred and five');
    expect(cardinal(12000)).toBe('twelve thousand');
    const timed = (s: string) => s.split(' ').map((word, i) => ({ word, start: i * 0.3, end: i * 0.3 + 0.25, confidence: 1 }));
    const withFigure = corpus.filter((s) => findSpokenFigures(timed(s), { units: ['in', 'thou', 'mm', 'cc', 'psi', 'lbf_ft'], defaultUnit: 'in' }).length > 0);
    expect(withFigure.length / corpus.length).toBeGreaterThan(0.3);
    expect(corpus).toContain('eight bolts on the sump');
    expect(findSpokenFigures(timed('eight bolts on the sump'), { units: ['in', 'thou'], defaultUnit: 'in' })).toEqual([]);
  });
});

describe('the trade dictionary and files', () => {
  const cmudict = ['thou DH AW', 'three TH R IY', 'the DH AH', 'the(2) DH IY', 'gap G AE P'].join('\n');

  it('keeps only the model\'s words, every variant numbered, "thou" also as the trade says it; names the unknown', () => {
    const { text, missing } = tradeDictionary(['the', 'thou', 'gap', 'zorp', BOS, EOS], cmudict);
    expect(text).toBe(['gap G AE P', 'the DH AH', 'the(2) DH IY', 'thou DH AW', 'thou(2) TH AW', ''].join('\n'));
    expect(missing).toEqual(['zorp']);
  });

  const model = pocketsphinxModel(loadConfig({}).speech.modelDir);
  const haveModel = fs.existsSync(model.lm) && fs.existsSync(model.dict);
  const cache = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-trade-lm-test-'));
  afterAll(() => fs.rmSync(cache, { recursive: true, force: true }));

  it.runIf(haveModel)('reads the general model\'s unigrams (they sum to one before the cut)', () => {
    const top = generalUnigrams(model.lm, 2000);
    expect(top.size).toBe(2000);
    expect(top.has('the')).toBe(true);
    expect(top.has(BOS)).toBe(false);
    expect(top.get('the')!).toBeGreaterThan(top.get('bolt') ?? 0);
  });

  it('reads nothing from a file that is not a trie model', () => {
    const junk = path.join(cache, 'junk.bin');
    fs.writeFileSync(junk, 'not a language model');
    expect(generalUnigrams(junk, 10).size).toBe(0);
    expect(generalUnigrams(path.join(cache, 'absent.bin'), 10).size).toBe(0);
  });

  it.runIf(haveModel)('makes the model and dictionary once, in seconds, every model word pronounced', () => {
    const t0 = performance.now();
    const files = tradeLanguageModel(model, cache);
    expect(performance.now() - t0).toBeLessThan(10_000);
    const again = tradeLanguageModel(model, cache);
    expect(again).toEqual(files);
    const arpa = readArpa(fs.readFileSync(files.lm, 'utf8'));
    const words = new Set(fs.readFileSync(files.dict, 'utf8').trim().split('\n').map((l) => l.split(' ')[0]!.replace(/\(\d+\)$/, '')));
    for (const [, w] of arpa.sections.get(1)!) if (w !== BOS && w !== EOS) expect(words.has(w!), w).toBe(true);
    expect(fs.readFileSync(files.dict, 'utf8')).toMatch(/^thou\(\d\) TH AW$/m);
    expect(fs.readdirSync(path.dirname(files.lm)).filter((f) => f.endsWith('.tmp'))).toEqual([]);
  });
});
