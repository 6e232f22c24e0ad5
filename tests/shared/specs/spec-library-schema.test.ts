import { describe, expect, it } from 'vitest';
import { judgeSpec, specSchema as engineSpecSchema } from '@shared/measure/spec.schema';
import { picometresPerUnit } from '@shared/measure/units';
import { normaliseSpecFigures, specInputSchema, specVersionInputSchema, toEngineSpec } from '@shared/specs/spec-library.schema';

/** Field names and messages a zod refusal reports (the API's details[]). */
function issues(result: { success: boolean; error?: { issues: { path: PropertyKey[]; message: string }[] } }) {
  return (result.error?.issues ?? []).map((i) => ({ path: i.path.map(String).join('.'), message: i.message }));
}

const base = {
  unit: 'in',
  min: '0.0020',
  max: '0.0040',
  source: { kind: 'manual', text: 'Test engine workshop manual (invented), section 1' },
} as const;

describe("the spec-library schema reports the engine's band rules under our field names", () => {
  it('accepts a plain band and keeps the figures as typed', () => {
    const v = specVersionInputSchema.parse({ ...base, preferredMin: '0.0025', preferredMax: '0.0035', reject: '0.0050' });
    expect(v).toMatchObject({ min: '0.0020', max: '0.0040', preferredMin: '0.0025', rule: 'guarded', note: '' });
  });

  it.each([
    // The engine reports these at its own paths (preferred, preferred.min, min, reject): each must
    // arrive at the field the form has.
    ['a preferred band reaching below the band', { preferredMin: '0.0010' }, 'preferredMin', 'preferred band must lie inside min…max'],
    ['a preferred band reaching above the band', { preferredMax: '0.0050' }, 'preferredMin', 'preferred band must lie inside min…max'],
    ['a preferred min above the preferred max', { preferredMin: '0.0035', preferredMax: '0.0025' }, 'preferredMin', 'preferredMin must not be greater than preferredMax'],
    ['a reject limit inside the band', { reject: '0.0030' }, 'reject', 'reject must lie outside the band: at or above max, or at or below min'],
    ['min greater than max', { min: '0.0050' }, 'min', 'min must not be greater than max'],
    ['neither min nor max', { min: null, max: null }, 'min', 'spec needs a min, a max or both'],
  ])('refuses %s at %s', (_what, change, field, message) => {
    expect(issues(specVersionInputSchema.safeParse({ ...base, ...change }))).toEqual([{ path: field, message }]);
  });

  it('refuses figures the engine cannot read, naming each field', () => {
    const r = issues(specVersionInputSchema.safeParse({ ...base, min: '0.002 furlongs', preferredMax: '0.001 mm' }));
    expect(r.map((i) => i.path)).toEqual(['min', 'preferredMax']);
    // The refusal names the spec's unit, the one to type it in.
    expect(r[1]!.message).toBe("enter it in in (this record's unit), or leave the unit off");
  });

  it('refuses a spec without a source, or with one that says nothing', () => {
    const { source: _source, ...noSource } = base;
    expect(issues(specVersionInputSchema.safeParse(noSource)).map((i) => i.path)).toEqual(['source']);
    expect(issues(specVersionInputSchema.safeParse({ ...base, source: { kind: 'manual', text: '' } })).map((i) => i.path)).toEqual(['source.text']);
    expect(issues(specVersionInputSchema.safeParse({ ...base, source: { kind: 'forum', text: 'a thread' } })).map((i) => i.path)).toEqual(['source.kind']);
  });

  it('a new spec also needs a name of at least 3 characters', () => {
    expect(issues(specInputSchema.safeParse({ ...base, name: 'x' })).map((i) => i.path)).toEqual(['name']);
  });
});

describe('normaliseSpecFigures and toEngineSpec', () => {
  it('strips a typed unit that matches, keeping the digits', () => {
    const n = normaliseSpecFigures({ ...base, min: '0.0020 in', max: '0.0040"', preferredMin: null, preferredMax: null, reject: null, rule: 'guarded' });
    expect(n).toMatchObject({ ok: true, figures: { min: '0.0020', max: '0.0040' } });
  });

  it('gives the engine a spec it accepts, and a one-sided preferred band keeps its other end from the band', () => {
    const engine = toEngineSpec({ ...base, preferredMin: null, preferredMax: '0.0030', reject: '0.0050', rule: 'guarded', version: 2 });
    const parsed = engineSpecSchema.parse(engine);
    expect(parsed).toMatchObject({ unit: 'in', min: 0.002, max: 0.004, preferred: { max: 0.003 }, reject: 0.005, version: 2 });
    // A value of 0.0025 in with U = 0 judged against it: the preferred band runs from min (0.0020) to 0.0030.
    const j = judgeSpec(25n * picometresPerUnit.tenth, 0n, parsed);
    expect(j.limitsPm.preferred).toEqual({ minPm: 20n * picometresPerUnit.tenth, maxPm: 30n * picometresPerUnit.tenth });
    expect(j.preferred?.verdict).toBe('conforms');
  });
});
