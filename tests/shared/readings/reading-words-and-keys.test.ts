import { describe, expect, it } from 'vitest';
import { engineReadingProblems, normaliseReadingFigures, toEngineReading } from '@shared/readings/reading-figures';
import { keyFromName, readingInputSchema, suggestKey, uniqueKey } from '@shared/readings/reading.schema';
import { engineMessageInFormWords, readingFieldWords } from '@shared/readings/reading-words';

const blades = { unit: 'in', kind: 'feeler-blades' } as const;
const micrometer = { unit: 'mm', kind: 'outside-micrometer' } as const;

function problemsOf(result: ReturnType<typeof normaliseReadingFigures>) {
  if (result.ok) throw new Error('expected a refusal');
  return result.problems;
}

function schemaIssues(body: Record<string, unknown>) {
  const parsed = readingInputSchema.safeParse({ momentId: 1, instrumentId: 1, name: 'Gap', ...body });
  if (parsed.success) throw new Error('expected a refusal');
  return parsed.error.issues.map((i) => ({ path: i.path.map(String).join('.'), message: i.message }));
}

describe('a key suggested from a name', () => {
  it('is the name in lower case with hyphens, every word kept', () => {
    expect(keyFromName('Outer rotor to body')).toBe('outer-rotor-to-body');
    expect(keyFromName('End float, after facing')).toBe('end-float-after-facing');
    expect(keyFromName('  Rotor tip  gap (No. 3) ')).toBe('rotor-tip-gap-no-3');
    expect(keyFromName('Crank end float: thrust washers')).toBe('crank-end-float-thrust-washers');
  });

  it('is the name itself when the build has no key like it', () => {
    expect(suggestKey('Outer rotor to body', [])).toBe('outer-rotor-to-body');
    expect(suggestKey('Outer rotor to body', ['gap', 'outer-rotor'])).toBe('outer-rotor-to-body');
  });

  it('takes -2, -3… after a key the build already has', () => {
    expect(suggestKey('Gap', ['gap'])).toBe('gap-2');
    expect(suggestKey('Gap', ['gap', 'gap-2'])).toBe('gap-3');
    // A gap in the numbering is reused: the first free one wins.
    expect(suggestKey('Gap', ['gap', 'gap-3'])).toBe('gap-2');
  });

  it('stays within 40 characters when the suffix is added', () => {
    const name = 'Outer rotor to body clearance at the twelve o clock position';
    const base = keyFromName(name);
    expect(base).toHaveLength(40);
    const next = suggestKey(name, [base]);
    expect(next).toHaveLength(40);
    expect(next.endsWith('-2')).toBe(true);
    expect(next).not.toBe(base);
  });

  it('takes the fallback name when the name is empty, and makes it free too', () => {
    expect(suggestKey('   ', ['clearance'], 'Clearance')).toBe('clearance-2');
    expect(suggestKey('', [])).toBe('reading');
  });

  it('never returns a key that is in the list it was given', () => {
    const taken = ['gap', 'gap-2', 'gap-3', 'gap-4'];
    expect(taken).not.toContain(uniqueKey('gap', taken));
    expect(uniqueKey('gap', taken)).toBe('gap-5');
  });
});

describe('refusals of a reading speak the words on the form', () => {
  it('a bracket whose "does not enter" blade is thinner names both blades as typed, on stops', () => {
    const p = problemsOf(normaliseReadingFigures({ kind: 'bracket', passes: '0.004 in', stops: '0.003' }, blades));
    expect(p).toEqual([
      { path: 'stops', message: 'The blade that does not enter must be thicker than the one that enters (0.004 in enters, 0.003 in does not).' },
    ]);
    expect(p[0]!.message).not.toMatch(/\bstops\b|\bpasses\b/);
  });

  it('blades in two units say which unit each is in, on the later blade', () => {
    const p = problemsOf(normaliseReadingFigures({ kind: 'bracket', passes: '3 thou', stops: '0.10 mm' }, blades));
    expect(p).toEqual([{ path: 'stops', message: 'Give both blades in the same unit: this one is in mm, the blade that enters is in thou.' }]);
  });

  it('repeated values in two units name the value by its place', () => {
    const p = problemsOf(normaliseReadingFigures({ kind: 'repeated', values: ['14.331 mm', '14.333 mm', '0.5642 in'] }, micrometer));
    expect(p).toEqual([{ path: 'values.2', message: 'Give every value in the same unit: this one is in in, value 1 is in mm.' }]);
  });

  it('an empty blade box asks for that blade, on its own field', () => {
    expect(schemaIssues({ kind: 'bracket', passes: '', stops: '0.004' })).toEqual([{ path: 'passes', message: 'enter the thickest blade that enters' }]);
    expect(schemaIssues({ kind: 'bracket', passes: '0.003', stops: '  ' })).toEqual([
      { path: 'stops', message: 'enter the thinnest blade that does not enter' },
    ]);
  });

  it('a figure of another kind names the choice it belongs to and what to do', () => {
    expect(schemaIssues({ kind: 'direct', value: '0.5', passes: '0.003' })).toEqual([
      { path: 'passes', message: '“One indication” has no box for the blade that enters: leave it out, or choose “Feeler bracket”.' },
    ]);
    const p = problemsOf(normaliseReadingFigures({ kind: 'bracket', passes: '0.003', stops: '0.004', values: ['1', '2'] }, blades));
    expect(p).toEqual([{ path: 'values', message: '“Feeler bracket” has no box for the values: leave it out, or choose “Repeated”.' }]);
  });

  it('one value where a repeated reading needs two says to choose one indication', () => {
    expect(schemaIssues({ kind: 'repeated', values: ['14.331'] })).toEqual([
      { path: 'values', message: 'enter at least 2 values (for a single value, choose “One indication”)' },
    ]);
  });

  it('a temperature that is not a number says how to write it', () => {
    expect(schemaIssues({ kind: 'direct', value: '0.5', temperatureC: '21,5' as unknown as number })).toEqual([
      { path: 'temperatureC', message: 'enter the temperature as a number of °C, e.g. 21.5, or leave it empty' },
    ]);
  });

  it('a size below zero says to leave out the minus', () => {
    expect(problemsOf(normaliseReadingFigures({ kind: 'direct', value: '-0.0005' }, micrometer))).toEqual([
      { path: 'value', message: 'a length cannot be negative: enter it without the minus sign (only a dial test indicator or a dial bore gauge reads below zero)' },
    ]);
  });
});

describe('engine refusals in the words of the form', () => {
  it('the engine field that opens a message becomes the name on the form', () => {
    expect(engineMessageInFormWords('passes', 'passes must be at least 0')).toBe('The blade that enters must be at least 0');
    expect(engineMessageInFormWords('values.1', 'values.1 must be a decimal number like "0.5640"')).toBe('Value 2 must be a decimal number like "0.5640"');
    expect(engineMessageInFormWords('values', 'values needs at least 2 numbers (use kind "direct" for one)')).toBe(
      'enter at least 2 values (for a single value, choose “One indication”)',
    );
  });

  it("the engine's own bracket refusal becomes the form's sentence with both blades", () => {
    expect(
      engineMessageInFormWords('stops', 'stops must be thicker than passes (the thinnest blade that does not enter is thicker than the thickest that does)', {
        passes: '0.006',
        stops: '0.005',
        unit: 'in',
      }),
    ).toBe('The blade that does not enter must be thicker than the one that enters (0.006 in enters, 0.005 in does not).');
    const backwards = engineReadingProblems({ kind: 'bracket', passes: '0.006', stops: '0.005', unit: 'in' });
    expect(backwards).toEqual([{ path: 'stops', message: 'The blade that does not enter must be thicker than the one that enters (0.006 in enters, 0.005 in does not).' }]);
  });

  it("an instrument's figure is named as the instrument's and says where to correct it", () => {
    const { engine } = toEngineReading(
      { kind: 'direct', unit: 'mm', value: '1.00', passes: null, stops: null, values: null, entered: {}, temperatureC: null, material: null },
      { unit: 'mm', kind: 'other', resolution: '20', statedUncertainty: null },
      null,
    );
    const [problem] = engineReadingProblems(engine);
    expect(problem?.path).toBe('instrumentId');
    expect(problem?.message).toMatch(/^The instrument's resolution must be no coarser than 10 mm/);
    expect(problem?.message).toMatch(/correct it in the instruments register\.$/);
  });

  it('paths read as the form names its boxes', () => {
    expect(readingFieldWords('passes')).toBe('the blade that enters');
    expect(readingFieldWords('stops')).toBe('the blade that does not enter');
    expect(readingFieldWords('values.0')).toBe('value 1');
    expect(readingFieldWords('zeroOffset')).toBe("the day's zero offset");
  });
});
