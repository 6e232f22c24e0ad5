import { describe, expect, it } from 'vitest';
import type { Clearance } from '@shared/clearances/clearance.schema';
import type { Reading } from '@shared/readings/reading.schema';
import { checkClaim, claimTargetKey, claimTargetsFrom, findClaims, type ClaimKind, type ClaimRef, type ClaimTarget } from '@shared/stories/claims';
import { findStatedLengths } from '@shared/stories/number-words';

/** Picometres in one inch, exactly: 1 in = 25.4 mm (NIST SP 811, appendix B). */
const PM_PER_IN = 25_400_000_000n;
const umFromIn = (inches: number) => inches * 25_400; // NIST SP 811, appendix B: 1 in = 25.4 mm exactly

function target(kind: ClaimKind, key: string, fields: Partial<ClaimTarget> = {}): ClaimTarget {
  return {
    kind,
    key,
    name: key,
    quantity: 'length',
    unit: 'in',
    value: 0,
    expandedUncertainty: 0,
    valueUm: 0,
    expandedUncertaintyUm: 0,
    display: '',
    verdict: null,
    momentId: null,
    clipId: null,
    atMs: null,
    frameUrl: null,
    ...fields,
  };
}

function claim(kind: ClaimKind, key: string, text: string): ClaimRef {
  return { kind, key, text, start: 0, end: 0, line: 1 };
}

/** A computed end float of 0.0047 in ± 0.0003 in (expanded), judged within spec. */
const endFloat = target('clearance', 'end-float-after', {
  valueUm: umFromIn(0.0047), // 119.38 µm
  expandedUncertaintyUm: umFromIn(0.0003), // 7.62 µm
  display: '0.0047 in ± 0.00030 in (k = 2)',
  verdict: 'conforms',
});
const targets = new Map([[claimTargetKey('clearance', 'end-float-after'), endFloat]]);

describe('finding claims in a body', () => {
  it('gives each claim its kind, key, words, source offsets and line', () => {
    const body = [
      '# Oil pump',
      '',
      'After lapping, [end float is now three thou](clearance:end-float-after) and',
      '[the bore measured 0.5642 in](reading:bore-depth).',
    ].join('\n');
    const { claims, broken } = findClaims(body);
    expect(broken).toEqual([]);
    expect(claims.map(({ kind, key, text, line }) => ({ kind, key, text, line }))).toEqual([
      { kind: 'clearance', key: 'end-float-after', text: 'end float is now three thou', line: 3 },
      { kind: 'reading', key: 'bore-depth', text: 'the bore measured 0.5642 in', line: 4 },
    ]);
    expect(claims.map((c) => body.slice(c.start, c.end))).toEqual([
      '[end float is now three thou](clearance:end-float-after)',
      '[the bore measured 0.5642 in](reading:bore-depth)',
    ]);
  });

  it('finds claims in quotes, lists, headings and table cells at their place in the source', () => {
    const body = [
      '## Pump [as found](reading:as-found) ##',
      '',
      '> quoted',
      '> and [*lapped* flat](clearance:lapped)',
      '',
      '- first step',
      '  then [the rotor](reading:rotor-height)',
      '',
      '| step | figure |',
      '|---|---|',
      '| [same](reading:same) | [same](reading:same-two) |',
    ].join('\n');
    const { claims } = findClaims(body);
    expect(claims.map((c) => [c.key, c.line, body.slice(c.start, c.end)])).toEqual([
      ['as-found', 1, '[as found](reading:as-found)'],
      ['lapped', 4, '[*lapped* flat](clearance:lapped)'],
      ['rotor-height', 7, '[the rotor](reading:rotor-height)'],
      ['same', 11, '[same](reading:same)'],
      ['same-two', 11, '[same](reading:same-two)'],
    ]);
    expect(claims[1]?.text).toBe('lapped flat');
  });

  it('keeps offsets right when lines end in CRLF', () => {
    const body = 'first line\r\nsecond [x](reading:x-one)\r\nthird [y](clearance:y-two)';
    const { claims } = findClaims(body);
    expect(claims.map((c) => [c.line, body.slice(c.start, c.end)])).toEqual([
      [2, '[x](reading:x-one)'],
      [3, '[y](clearance:y-two)'],
    ]);
  });

  it('ignores claims inside code spans and fenced code', () => {
    const body = ['Write `[x](reading:in-span)` to cite.', '', '```', '[y](clearance:in-fence)', '```', '', '    [z](reading:indented-code)'].join('\n');
    expect(findClaims(body)).toEqual({ claims: [], broken: [] });
  });

  it('reports targets that look like ours but are not as broken claims, with a message', () => {
    const body = 'A [typo](clearence:end-float) and [empty](reading:) and [spaced](clearance:Bad Key) and [fine](https://example.com/x).';
    const { claims, broken } = findClaims(body);
    expect(claims).toEqual([]);
    expect(broken.map((b) => [b.target, b.text, body.slice(b.start, b.end)])).toEqual([
      ['clearence:end-float', 'typo', '[typo](clearence:end-float)'],
      ['reading:', 'empty', '[empty](reading:)'],
      ['clearance:Bad Key', 'spaced', '[spaced](clearance:Bad Key)'],
    ]);
    for (const b of broken) expect(b.message.length).toBeGreaterThan(10);
    expect(broken[1]?.message).toMatch(/name the reading/);
  });
});

describe('lengths stated in a claim’s words', () => {
  const stated = (text: string) => findStatedLengths(text).map((s) => ({ text: s.text, unit: s.unit, pm: s.pm, stepPm: s.stepPm }));

  it('reads digits with a unit the engine parses, with the step of their last digit', () => {
    // Exact conversions from NIST SP 811 appendix B (1 in = 25.4 mm); thou = 0.001 in, tenth = 0.0001 in.
    expect(stated('0.0047 in')).toEqual([{ text: '0.0047 in', unit: 'in', pm: (47n * PM_PER_IN) / 10_000n, stepPm: PM_PER_IN / 10_000n }]);
    expect(stated('now 4.7 thou')).toEqual([{ text: '4.7 thou', unit: 'thou', pm: (47n * PM_PER_IN) / 10_000n, stepPm: PM_PER_IN / 10_000n }]);
    expect(stated('about .12 mm')).toEqual([{ text: '.12 mm', unit: 'mm', pm: 120_000_000n, stepPm: 10_000_000n }]);
    expect(stated('gap 0.003"')).toEqual([{ text: '0.003"', unit: 'in', pm: (3n * PM_PER_IN) / 1000n, stepPm: PM_PER_IN / 1000n }]);
  });

  it('reads numbers in words with a unit: ones to twenty, tens, halves', () => {
    const thou = PM_PER_IN / 1000n;
    expect(stated('three thou')).toEqual([{ text: 'three thou', unit: 'thou', pm: 3n * thou, stepPm: thou }]);
    expect(stated('half a thou')).toEqual([{ text: 'half a thou', unit: 'thou', pm: thou / 2n, stepPm: thou / 2n }]);
    expect(stated('a thou and a half')).toEqual([{ text: 'a thou and a half', unit: 'thou', pm: (3n * thou) / 2n, stepPm: thou / 2n }]);
    expect(stated('two tenths')).toEqual([{ text: 'two tenths', unit: 'tenth', pm: 2n * (thou / 10n), stepPm: thou / 10n }]);
    expect(stated('twelve microns')).toEqual([{ text: 'twelve microns', unit: 'um', pm: 12_000_000n, stepPm: 1_000_000n }]);
    expect(stated('twenty-five microns')).toEqual([{ text: 'twenty-five microns', unit: 'um', pm: 25_000_000n, stepPm: 1_000_000n }]);
  });

  it('does not read names, bare numbers or one length twice', () => {
    expect(stated('the R4 block, step 2')).toEqual([]);
    expect(stated('one in ten rotors')).toEqual([]);
    expect(stated('3 tenths of a thou').map((s) => s.text)).toEqual(['3 tenths of a thou']);
  });
});

describe('checking a claim’s words against its figure', () => {
  // Our rule, common practice (no published source): a stated figure means the interval its own
  // rounding implies, and disagrees when that interval and value ± U do not overlap.
  it('flags "three thou" over 0.0047 in ± 0.0003 in: 2.5–3.5 thou does not reach 4.4–5.0 thou', () => {
    const status = checkClaim(claim('clearance', 'end-float-after', 'end float is now three thou'), targets);
    expect(status.state).toBe('number-disagrees');
    if (status.state !== 'number-disagrees') return;
    expect(status.statedUm).toBeCloseTo(umFromIn(0.003), 9); // 76.2 µm, NIST SP 811 B
    expect(status.message).toContain('2.5–3.5 thou');
  });

  it('accepts "4.7 thou" and "just under five thou" over the same figure', () => {
    expect(checkClaim(claim('clearance', 'end-float-after', 'end float is 4.7 thou'), targets)).toEqual({ state: 'ok' });
    expect(checkClaim(claim('clearance', 'end-float-after', 'just under five thou of end float'), targets)).toEqual({ state: 'ok' });
  });

  it('compares millimetres with a figure worked in inches in micrometres', () => {
    // 0.12 mm stated is 115–125 µm; 0.0047 in ± 0.0003 in is 111.76–127.00 µm (NIST SP 811 B): they overlap.
    expect(checkClaim(claim('clearance', 'end-float-after', 'about 0.12 mm'), targets)).toEqual({ state: 'ok' });
    // 0.15 mm stated is 145–155 µm, above 127.00 µm.
    const status = checkClaim(claim('clearance', 'end-float-after', 'about 0.15 mm'), targets);
    expect(status.state).toBe('number-disagrees');
    if (status.state === 'number-disagrees') expect(status.statedUm).toBeCloseTo(150, 9);
  });

  it('treats intervals that only touch as agreeing', () => {
    // 0.0050 in ± 0.0005 in reaches down to 0.0045 in; "four thou" means 3.5–4.5 thou: the ends meet exactly.
    const touching = new Map([
      [claimTargetKey('clearance', 'gap'), target('clearance', 'gap', { valueUm: umFromIn(0.005), expandedUncertaintyUm: umFromIn(0.0005), display: '0.0050 in ± 0.00050 in (k = 2)' })],
    ]);
    expect(checkClaim(claim('clearance', 'gap', 'four thou'), touching)).toEqual({ state: 'ok' });
    // "0.0044 in" means 0.00435–0.00445 in, which stops short of 0.0045 in.
    expect(checkClaim(claim('clearance', 'gap', '0.0044 in'), touching).state).toBe('number-disagrees');
  });

  it('flags verdict words that contradict the verdict', () => {
    expect(checkClaim(claim('clearance', 'end-float-after', 'now within spec'), targets)).toEqual({ state: 'ok' });
    expect(checkClaim(claim('clearance', 'end-float-after', 'end float in spec'), targets)).toEqual({ state: 'ok' });
    expect(checkClaim(claim('clearance', 'end-float-after', 'still out of spec'), targets).state).toBe('verdict-disagrees');
    expect(checkClaim(claim('clearance', 'end-float-after', 'too close to call'), targets).state).toBe('verdict-disagrees');
    expect(checkClaim(claim('clearance', 'end-float-after', 'not within spec'), targets).state).toBe('verdict-disagrees');
    const undecided = new Map([[claimTargetKey('clearance', 'end-float-after'), { ...endFloat, verdict: 'undecided' as const }]]);
    expect(checkClaim(claim('clearance', 'end-float-after', 'too close to call'), undecided)).toEqual({ state: 'ok' });
    expect(checkClaim(claim('clearance', 'end-float-after', 'within spec'), undecided).state).toBe('verdict-disagrees');
  });

  it('flags verdict words on a figure that has no spec to be judged against', () => {
    const reading = new Map([[claimTargetKey('reading', 'bore'), target('reading', 'bore', { valueUm: 14_330, expandedUncertaintyUm: 2.9 })]]);
    expect(checkClaim(claim('reading', 'bore', 'the bore is within spec'), reading).state).toBe('verdict-disagrees');
  });

  it('accepts a claim that states no number and no verdict, and names an unknown target', () => {
    expect(checkClaim(claim('clearance', 'end-float-after', 'the end float after new washers'), targets)).toEqual({ state: 'ok' });
    const unknown = checkClaim(claim('reading', 'end-float-after', 'three thou'), targets);
    expect(unknown.state).toBe('unknown-target');
    if (unknown.state === 'unknown-target') expect(unknown.message).toContain('end-float-after');
  });
});

describe('claim targets from a build’s readings and clearances', () => {
  const reading = {
    id: 1,
    buildId: 1,
    momentId: 7,
    clipId: 3,
    clipTitle: 'Pump body',
    atMs: 12_500,
    frameUrl: '/api/clips/3/frame?t=12.500',
    instrumentId: 2,
    instrumentName: 'Depth micrometer',
    partId: null,
    partName: null,
    key: 'bore-depth',
    name: 'Bore depth',
    kind: 'direct',
    unit: 'in',
    value: '0.5642',
    passes: null,
    stops: null,
    values: null,
    entered: { value: '0.5642' },
    temperatureC: null,
    material: null,
    note: '',
    takenOn: '2026-11-30',
    reviewState: 'unchecked',
    zeroCheck: null,
    engine: { kind: 'direct', value: 0.5642, unit: 'in', resolution: 0.0001 },
    engineInstrument: null,
    result: { quantity: 'length', valueUm: umFromIn(0.5642), standardUncertaintyUm: 1.5, display: '0.5642 in', steps: [] },
    warnings: [],
    createdBy: 1,
    createdByName: 'Builder',
    updatedBy: 1,
    lockVersion: 1,
    createdAt: '2026-11-30T10:00:00.000Z',
    updatedAt: '2026-11-30T10:00:00.000Z',
  } satisfies Reading;
  const clearance = (key: string, result: Clearance['result']): Clearance => ({
    id: key.length,
    buildId: 1,
    key,
    name: key,
    template: null,
    terms: [],
    formula: null,
    constants: {},
    resultUnit: null,
    specVersionId: null,
    spec: null,
    coverageFactor: 2,
    note: '',
    reviewState: 'unchecked',
    result,
    problems: result ? [] : ['a reading is missing'],
    lockVersion: 1,
    createdAt: '2026-11-30T10:00:00.000Z',
    updatedAt: '2026-11-30T10:00:00.000Z',
  });

  it('quotes a reading at k = 2 with its moment, and leaves out clearances that cannot be worked out', () => {
    const worked = clearance('end-float', {
      quantity: 'length',
      unit: 'in',
      valueUm: umFromIn(0.0047),
      standardUncertaintyUm: 3.81,
      expandedUncertaintyUm: 7.62,
      coverageFactor: 2,
      display: '0.0047 in ± 0.00030 in (k = 2)',
      verdict: 'conforms',
      preferredVerdict: null,
      rejectVerdict: null,
      rule: 'guarded',
      band: null,
      steps: [],
    });
    const map = claimTargetsFrom([reading], [worked, clearance('no-figures', null)]);
    expect([...map.keys()]).toEqual(['reading:bore-depth', 'clearance:end-float']);
    const r = map.get('reading:bore-depth')!;
    // GUM 6.2.1 and 6.3.3: U = k·u with k = 2; 2 × 1.5 µm = 3.0 µm = 0.000118 in, shown to two significant digits (GUM 7.2.6).
    expect(r.expandedUncertaintyUm).toBe(3);
    expect(r.display).toBe('0.5642 in ± 0.00012 in (k = 2)');
    expect([r.momentId, r.clipId, r.atMs, r.frameUrl]).toEqual([7, 3, 12_500, '/api/clips/3/frame?t=12.500']);
    expect(map.get('clearance:end-float')?.verdict).toBe('conforms');
  });
});
