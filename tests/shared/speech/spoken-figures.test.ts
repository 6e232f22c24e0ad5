/**
 * Spoken figures: what a builder says at the bench, as the recognizer hands it over, and the
 * reading we propose. Unit definitions: NIST SP 811 (2008) appendix B (1 in = 25.4 mm exactly;
 * 1 thou = 0.001 in and a tenth = 0.0001 in follow from it). How the trade says figures ("five
 * sixty four and two tenths" is 564.2 thou, "mils" are thou, "pounds" on a torque wrench are
 * lbf·ft) is common practice (no published source); the rules are in the module's header.
 */
import { describe, expect, it } from 'vitest';
import { convertExact, type AnyUnit } from '@shared/measure/quantities';
import { Fraction, fractionToExactText } from '@shared/measure/exact';
import {
  findSpokenFigures,
  parseSpokenNumber,
  TRADE_VOCABULARY,
  type FindSpokenFiguresOptions,
  type SpokenBracket,
  type SpokenFigure,
  type SpokenValue,
  type TimedWord,
} from '@shared/speech/spoken-figures';

/** Words a third of a second apart, as a recognizer would time them. */
function timed(text: string, confidence = 0.9): TimedWord[] {
  return text
    .split(' ')
    .filter((w) => w !== '')
    .map((word, i) => ({ word, start: i * 0.4, end: i * 0.4 + 0.3, confidence }));
}

function say(text: string, opts?: FindSpokenFiguresOptions): SpokenFigure[] {
  return findSpokenFigures(timed(text), opts);
}

function values(figures: SpokenFigure[]): SpokenValue[] {
  return figures.filter((f): f is SpokenValue => f.kind === 'value');
}

/** "0.5642 in" → the exact value of a figure in that unit, for checking what a row means. */
function inUnit(value: string, from: AnyUnit, to: AnyUnit): string | null {
  return fractionToExactText(convertExact(new Fraction(value), from, to));
}

type Row = [said: string, value: string, unit: AnyUnit, means?: string, opts?: FindSpokenFiguresOptions];

// `means` restates a length in inches or millimetres by the unit definitions (NIST SP 811 B.8;
// thou and tenths as the trade uses them, common practice (no published source)).
const TABLE: Row[] = [
  // Thou and tenths
  ['five hundred sixty four and two tenths', '564.2', 'thou', '0.5642 in'],
  ['five sixty four and two tenths', '564.2', 'thou', '0.5642 in'],
  ['five hundred and sixty four thou', '564', 'thou', '0.564 in'],
  ['three thou', '3', 'thou', '0.003 in'],
  ['three and a half thou', '3.5', 'thou', '0.0035 in'],
  ['three thou and a half', '3.5', 'thou', '0.0035 in'],
  ['four thou and two tenths', '4.2', 'thou', '0.0042 in'],
  ['four thou two tenths', '4.2', 'thou', '0.0042 in'],
  ['three point five thou and two tenths', '3.7', 'thou', '0.0037 in'],
  ['minus two thou and two tenths', '-2.2', 'thou', '-0.0022 in'],
  ['twelve thousandths', '12', 'thou', '0.012 in'],
  ['five thousandths of an inch', '5', 'thou', '0.005 in'],
  ['seven mils', '7', 'thou', '0.007 in'],
  ['one mil', '1', 'thou', '0.001 in'],
  ['a thou', '1', 'thou', '0.001 in'],
  ['half a thou', '0.5', 'thou', '0.0005 in'],
  ['one point five thou', '1.5', 'thou', '0.0015 in'],
  ['minus two thou', '-2', 'thou', '-0.002 in'],
  ['two tenths', '2', 'tenth', '0.0002 in'],
  ['half a tenth', '0.5', 'tenth', '0.00005 in'],
  ['three tenths of a thou', '3', 'tenth', '0.0003 in'],
  ['a tenth', '1', 'tenth', '0.0001 in'],
  // Inches
  ['point five six four two inches', '0.5642', 'in', '0.5642 in'],
  ['oh point oh four seven inches', '0.047', 'in', '0.047 in'],
  ['one inch', '1', 'in', '1 in'],
  ['an inch and a half', '1.5', 'in', '1.5 in'],
  ['three point two five oh inches', '3.250', 'in', '3.25 in'],
  ['two tenths of an inch', '0.2', 'in', '0.2 in'],
  ['five hundredths of an inch', '0.05', 'in', '0.05 in'],
  ['point five six four two', '0.5642', 'in', '0.5642 in', { defaultUnit: 'in' }],
  ['point five six four oh', '0.5640', 'in', '0.564 in', { defaultUnit: 'in' }],
  ['oh point oh four seven', '0.047', 'in', '0.047 in', { defaultUnit: 'in' }],
  ['five sixty four point two', '564.2', 'thou', '0.5642 in', { defaultUnit: 'thou' }],
  // Millimetres and microns
  ['fourteen point three three one millimetres', '14.331', 'mm', '14.331 mm'],
  ['eighty six point oh two millimeters', '86.02', 'mm', '86.02 mm'],
  ['one point five millimetre', '1.5', 'mm', '1.5 mm'],
  ['zero point oh five mil-lee-metres', '0.05', 'mm', '0.05 mm'],
  ['fourteen and three tenths millimetres', '14.3', 'mm', '14.3 mm'],
  ['two tenths of a millimetre', '0.2', 'mm', '0.2 mm'],
  ['five hundredths of a millimetre', '0.05', 'mm', '0.05 mm'],
  ['half a millimetre', '0.5', 'mm', '0.5 mm'],
  ['nought point two five mil', '0.25', 'mm', '0.25 mm', { mil: 'mm' }],
  ['twelve microns', '12', 'um', '0.012 mm'],
  ['one micron', '1', 'um', '0.001 mm'],
  ['eight thousandths of a millimetre', '8', 'um', '0.008 mm'],
  ['twenty five micrometres', '25', 'um', '0.025 mm'],
  // Volume
  ['forty two point six cc', '42.6', 'cc'],
  ['sixty four point two oh c c', '64.20', 'cc'],
  ['fifty five cubic centimetres', '55', 'cc'],
  ['twelve point five millilitres', '12.5', 'ml'],
  ['three hundred fifty cubic inches', '350', 'cu_in'],
  // Torque
  ['sixty five foot pounds', '65', 'lbf_ft'],
  ['sixty-five foot-pounds', '65', 'lbf_ft'],
  ['forty pound feet', '40', 'lbf_ft'],
  ['one hundred twenty inch pounds', '120', 'lbf_in'],
  ['eighty eight newton metres', '88', 'N_m'],
  ['ninety newton meters', '90', 'N_m'],
  ['sixty five pounds', '65', 'lbf_ft', undefined, { units: ['lbf_ft', 'N_m'] }],
  // Pressure
  ['forty five psi', '45', 'psi'],
  ['one hundred sixty p s i', '160', 'psi'],
  ['thirty two pounds per square inch', '32', 'psi'],
  ['three point one bar', '3.1', 'bar'],
  ['three hundred ten kilopascals', '310', 'kPa'],
  ['forty pounds', '40', 'psi', undefined, { units: ['psi', 'kPa'] }],
  // Angle
  ['one hundred eight degrees', '108', 'deg'],
  ['minus four degrees', '-4', 'deg'],
  ['thirty six and a half degrees', '36.5', 'deg'],
  ['a hundred and ten degrees', '110', 'deg'],
  // Temperature
  ['ninety two degrees c', '92', 'degC'],
  ['one ninety eight degrees fahrenheit', '198', 'degF'],
  ['twenty point five degrees celsius', '20.5', 'degC'],
  ['minus ten degrees f', '-10', 'degF'],
  // Ratio, time, mass
  ['ten point two to one', '10.2', '1'],
  ['nine and a half to one', '9.5', '1'],
  ['eleven to one compression', '11', '1'],
  ['twelve point five seconds', '12.5', 's'],
  ['five hundred twelve grams', '512', 'g'],
  ['one thousand two hundred grams', '1200', 'g'],
  // The recognizer's own marks
  ['five hundred(2) sixty four [noise] thou', '564', 'thou', '0.564 in'],
  ['uh three um thou', '3', 'thou', '0.003 in'],
  ['<s> FOURTEEN point three three one MILLIMETRES </s>', '14.331', 'mm', '14.331 mm'],
];

describe('spoken figures, one per row', () => {
  it('the table covers at least sixty spoken forms', () => {
    expect(TABLE.length).toBeGreaterThanOrEqual(60);
  });

  it.each(TABLE)('"%s" is %s %s', (said, value, unit, means, opts) => {
    const figures = say(said, opts);
    expect(figures).toHaveLength(1);
    expect(figures[0]).toMatchObject({ kind: 'value', value, unit });
    if (means) {
      const [number = '', meansUnit = ''] = means.split(' ');
      expect(inUnit(value, unit, meansUnit as AnyUnit)).toBe(number);
    }
  });

  it('says when the unit was the default rather than a word heard', () => {
    const [figure] = say('point five six four two', { defaultUnit: 'in' });
    expect(figure).toMatchObject({ unitHeard: false, note: expect.stringContaining('default') });
    expect(say('point five six four two inches')[0]).toMatchObject({ unitHeard: true });
  });
});

describe('feeler brackets', () => {
  it.each<[string, string, string, AnyUnit, FindSpokenFiguresOptions?]>([
    ["three thou slides four thou won't go", '3', '4', 'thou'],
    ["three thou slides, four won't go", '3', '4', 'thou'],
    ['four thou won’t go but three thou goes', '3', '4', 'thou'],
    ["two tenths drags three tenths doesn't go", '2', '3', 'tenth'],
    ['six thou drags and seven thou will not go', '6', '7', 'thou'],
    ['fifteen thou blade enters sixteen thou tight', '15', '16', 'thou'],
    ['point oh five millimetre slides point oh six millimetre stops', '0.05', '0.06', 'mm'],
    ["three slides four won't go", '3', '4', 'thou', { defaultUnit: 'thou' }],
  ])('"%s" brackets the gap: %s passes, %s stops (%s)', (said, passes, stops, unit, opts) => {
    const figures = say(said, opts);
    expect(figures).toHaveLength(1);
    expect(figures[0]).toMatchObject<Partial<SpokenBracket>>({ kind: 'bracket', passes, stops, unit });
  });

  it('a bracket spans both blades and takes the least confident word', () => {
    const words = timed("three thou slides four thou won't go");
    words[4] = { ...(words[4] as TimedWord), confidence: 0.31 };
    const [bracket] = findSpokenFigures(words);
    expect(bracket).toMatchObject({ start: 0, end: 6 * 0.4 + 0.3, confidence: 0.31 });
  });

  it('with no unit on either blade and no default unit, nothing is proposed', () => {
    expect(say("three slides four won't go")).toEqual([]);
  });

  it('a thicker blade that passes than the one that stops is not a bracket: both are kept as blades', () => {
    const figures = say("five thou slides four thou won't go");
    expect(figures).toEqual([
      expect.objectContaining({ kind: 'value', value: '5', unit: 'thou', feel: 'passes' }),
      expect.objectContaining({ kind: 'value', value: '4', unit: 'thou', feel: 'stops' }),
    ]);
  });

  it('a lone blade is a value that says how it went', () => {
    expect(say('three thou drags')).toEqual([expect.objectContaining({ kind: 'value', value: '3', feel: 'passes' })]);
  });
});

describe('ordinary talk proposes nothing', () => {
  it.each<[string, FindSpokenFiguresOptions?]>([
    ['cylinder one at top dead centre'],
    ['two bolts'],
    // No unit said and under a hundred: cc, mm or thou? A wrong unit costs more than a missed figure.
    ['forty two and six tenths'],
    ['in the first place'],
    ['bolt three'],
    ['torque them in two stages'],
    ['nineteen sixty five'],
    ['oh two bolts left'],
    ['at this point the head comes off'],
    ['give it two seconds'],
    ['one second let me look'],
    ['ten to one'],
    ['a ten millimetre socket'],
    ['a two inch pipe'],
    ['a ninety degree elbow'],
    ['a five pound hammer'],
    ['plus or minus two thou'],
    ['give or take a thou'],
    ['a tenth of the way round'],
    ['five hundredths'],
    ['two and a half hours'],
    ['sixty five pounds'],
    ['point five six four two'],
    ['five sixty four', { defaultUnit: 'thou' }],
    ['three hundred pounds'],
    ['number four goes in after'],
  ])('"%s"', (said, opts) => {
    expect(say(said, opts)).toEqual([]);
  });

  it('only the caller’s units are proposed', () => {
    expect(say('forty five psi and sixty five foot pounds', { units: ['lbf_ft'] })).toEqual([
      expect.objectContaining({ value: '65', unit: 'lbf_ft' }),
    ]);
  });

  it('a number does not run across a long pause', () => {
    const words: TimedWord[] = [
      { word: 'five', start: 0, end: 0.3, confidence: 0.9 },
      { word: 'hundred', start: 0.4, end: 0.7, confidence: 0.9 },
      { word: 'sixty', start: 3, end: 3.3, confidence: 0.9 },
      { word: 'four', start: 3.4, end: 3.7, confidence: 0.9 },
      { word: 'thou', start: 3.8, end: 4.1, confidence: 0.9 },
    ];
    expect(findSpokenFigures(words)).toEqual([expect.objectContaining({ value: '64', unit: 'thou', start: 3 })]);
  });
});

describe('the recognizer’s output for a real bench clip', () => {
  // pocketsphinx, generic English model: "five hundred sixty four and two tenths, three thou
  // slides, four thou won't go, sixty five foot pounds" as heard.
  const heard = `<s> 0.090 0.150 0.999700 / death 0.160 0.440 0.044429 / rates 0.450 0.780 0.452127 / five 0.790 1.110 0.978336 / hundred(4) 1.120 1.480 0.504201 / sixty 1.490 1.980 1.000100 / four 1.990 2.290 0.996605 / and(2) 2.300 2.470 1.000200 / two 2.480 2.640 0.479273 / tenths 2.650 3.190 0.551966 / <sil> 3.200 3.380 1.000000 / three 3.390 3.610 0.049220 / bus 3.620 3.860 0.008793 / lines 3.870 4.390 0.017320 / <sil> 4.400 4.420 0.654850 / for 4.430 4.670 0.839188 / that 4.680 4.840 0.314826 / won't 4.850 5.080 0.573232 / go 5.090 5.480 0.954846 / <sil> 5.490 5.740 0.999400 / toward(2) 5.750 6.060 0.755381 / sixty 6.070 6.550 0.999600 / five 6.560 6.870 0.999900 / hundred(3) 6.880 7.140 0.920711 / pounds 7.150 7.640 1.000000 / </s> 7.650 7.670 1.000000`;
  const words: TimedWord[] = heard.split(' / ').map((line) => {
    const [word = '', start = '', end = '', confidence = ''] = line.split(' ');
    return { word, start: Number(start), end: Number(end), confidence: Number(confidence) };
  });
  const thouReading = {
    kind: 'value',
    value: '564.2', // 564 thou + 2 tenths = 0.5642 in (common practice, no published source)
    unit: 'thou',
    start: 0.79,
    end: 3.19,
    confidence: 0.479273, // "two", the least confident of its words
    words: 'five hundred sixty four and two tenths',
  };

  it('finds 564.2 thou and invents no bracket from "three bus lines for that won\'t go"', () => {
    const figures = findSpokenFigures(words);
    expect(figures).toEqual([expect.objectContaining(thouReading)]);
    expect(inUnit('564.2', 'thou', 'in')).toBe('0.5642');
  });

  it('reads "sixty five hundred pounds" as 65 lbf·ft when a torque is expected, saying why', () => {
    const figures = findSpokenFigures(words, { units: ['in', 'thou', 'tenth', 'lbf_ft'] });
    expect(figures).toEqual([
      expect.objectContaining(thouReading),
      expect.objectContaining({
        kind: 'value',
        value: '65',
        unit: 'lbf_ft',
        start: 6.07,
        end: 7.64,
        words: 'sixty five hundred pounds',
        note: expect.stringContaining('foot pounds'),
      }),
    ]);
  });

  it('never proposes 6500: without a torque context "hundred pounds" gives nothing', () => {
    const contexts: FindSpokenFiguresOptions[] = [{}, { units: ['psi'] }, { units: ['psi', 'lbf_ft'] }, { defaultUnit: 'psi' }];
    for (const opts of contexts) {
      const figures = values(findSpokenFigures(words, opts));
      expect(figures.some((f) => f.start >= 6)).toBe(false);
      expect(figures.some((f) => f.value.startsWith('6500'))).toBe(false);
    }
  });
});

describe('parseSpokenNumber', () => {
  it.each<[string, string, number]>([
    ['zero', '0', 1],
    ['nought point five', '0.5', 3],
    ['nine hundred ninety nine thousand nine hundred ninety nine', '999999', 9],
    ['twelve thousand five hundred', '12500', 4],
    ['two thousand and five', '2005', 4],
    ['fifteen hundred', '1500', 2],
    ['sixty five hundred', '6500', 3],
    ['twenty twenty', '2020', 2],
    ['one oh five', '105', 3],
    ['five sixty four point two', '564.2', 5],
    ['point twenty five', '0.25', 3],
    ['point oh forty seven', '0.047', 4],
    ['minus three point five', '-3.5', 4],
    ['negative two', '-2', 2],
    ['three and a half', '3.5', 4],
    ['point five six four oh', '0.5640', 5],
    ['oh point oh four seven', '0.047', 5],
    ['five hundred sixty four and two tenths', '564', 4],
    ['five hundred and two tenths', '500', 2],
    ['five hundred and two', '502', 4],
    ['a hundred', '100', 2],
    ['five hundred(4) thou', '500', 2],
    ['one point', '1', 1],
    ['sixty-four thou', '64', 1],
  ])('"%s" is %s, using %i words', (said, value, used) => {
    expect(parseSpokenNumber(said.split(' '))).toEqual({ value, used });
  });

  it.each([['oh'], ['oh two'], ['point'], ['the'], [''], ['minus'], ['a'], ['thou']])('"%s" is no number', (said) => {
    expect(parseSpokenNumber(said.split(' ').filter((w) => w !== ''))).toBeNull();
  });
});

describe('TRADE_VOCABULARY', () => {
  it('holds every word the table’s figures are said with, once each, sorted', () => {
    const ignored = new Set(['<s>', '</s>', '[noise]', 'uh', 'um']);
    const said = TABLE.flatMap(([text]) => text.toLowerCase().split(/[\s-]+/))
      .map((w) => w.replace(/\(\d+\)$/, ''))
      .filter((w) => !ignored.has(w));
    expect(said.filter((w) => !TRADE_VOCABULARY.includes(w))).toEqual([]);
    expect([...TRADE_VOCABULARY].sort()).toEqual(TRADE_VOCABULARY);
    expect(new Set(TRADE_VOCABULARY).size).toBe(TRADE_VOCABULARY.length);
    expect(TRADE_VOCABULARY).toEqual(expect.arrayContaining(['thou', 'tenths', 'slides', "won't", 'point', 'oh']));
  });
});
