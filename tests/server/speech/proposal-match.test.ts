import { describe, expect, it } from 'vitest';
import type { Suggestion } from '@shared/speech/speech.schema';
import { LOGGED_WITHIN_MS, loggedReadingFor, type ClipReadingFigures } from '../../../server/features/speech/proposal-match';

/*
 * Which reading logs a proposal: near its words (±1.5 s, our rule) and the same figure within the
 * instrument's resolution. Conversions exact by NIST SP 811 B.8: 1 in = 1000 thou = 25.4 mm,
 * 1 thou = 10 tenths.
 */

const value = (v: string, unit: Suggestion['unit'], extra: Partial<Suggestion> = {}): Suggestion =>
  ({ id: '4000-0', kind: 'direct', value: v, feel: null, unit, atMs: 4000, endMs: 6000, source: 'speech', confidence: 0.9, text: '', unitHeard: true, dismissed: false, logged: false, ...extra }) as Suggestion;
const bracket = (passes: string, stops: string, unit: Suggestion['unit']): Suggestion =>
  ({ id: '4000-0', kind: 'bracket', passes, stops, unit, atMs: 4000, endMs: 6000, source: 'speech', confidence: 0.9, text: '', unitHeard: true, dismissed: false, logged: false }) as Suggestion;

let nextId = 1;
function reading(fields: Partial<ClipReadingFigures>): ClipReadingFigures {
  const id = nextId++;
  return { id, key: `r${id}`, kind: 'direct', unit: 'in', value: null, passes: null, stops: null, repeatedValues: null, atMs: 5000, resolution: '0.0001', resolutionUnit: 'in', ...fields };
}

describe('a proposal is logged by a reading', () => {
  it('of the same figure in another unit of the quantity, within one step of its resolution', () => {
    const heard = value('564.2', 'thou');
    expect(loggedReadingFor(heard, [reading({ value: '0.5642' })])).not.toBeNull();
    // 0.5643 in is one step of 0.0001 in away: the same within the resolution.
    expect(loggedReadingFor(heard, [reading({ value: '0.5643' })])).not.toBeNull();
    // Two steps away is another figure.
    expect(loggedReadingFor(heard, [reading({ value: '0.5644' })])).toBeNull();
    // 564.2 thou = 14.33068 mm: within 0.001 mm (the resolution of a millimetre micrometer) of 14.331 mm.
    expect(loggedReadingFor(heard, [reading({ unit: 'mm', value: '14.331', resolution: '0.001', resolutionUnit: 'mm' })])).not.toBeNull();
    // Another quantity never.
    expect(loggedReadingFor(value('35', 'lbf_ft'), [reading({ value: '35' })])).toBeNull();
  });

  it('whose moment is within 1.5 s of the words, the nearest winning', () => {
    const heard = value('3', 'thou');
    const before = reading({ value: '0.003', atMs: 4000 - LOGGED_WITHIN_MS });
    const tooEarly = reading({ value: '0.003', atMs: 4000 - LOGGED_WITHIN_MS - 1 });
    const during = reading({ value: '0.003', atMs: 5200 });
    const tooLate = reading({ value: '0.003', atMs: 6000 + LOGGED_WITHIN_MS + 1 });
    expect(loggedReadingFor(heard, [tooEarly, tooLate])).toBeNull();
    expect(loggedReadingFor(heard, [tooEarly, before])?.id).toBe(before.id);
    expect(loggedReadingFor(heard, [before, during, tooLate])?.id).toBe(during.id);
  });

  it('of a bracket on both blades, of a repeated reading on any value, of one side of a bracket for a blade said with how it went', () => {
    const blades = reading({ kind: 'bracket', passes: '0.003', stops: '0.004', resolution: '0.0005' });
    expect(loggedReadingFor(bracket('3', '4', 'thou'), [blades])?.id).toBe(blades.id);
    expect(loggedReadingFor(bracket('3', '5', 'thou'), [blades])).toBeNull();
    expect(loggedReadingFor(value('4', 'thou', { feel: 'stops' }), [blades])?.id).toBe(blades.id);
    expect(loggedReadingFor(value('4', 'thou', { feel: 'passes' }), [blades])).toBeNull();
    expect(loggedReadingFor(value('4', 'thou'), [blades])).toBeNull();
    const repeated = reading({ kind: 'repeated', repeatedValues: ['0.5641', '0.5642', '0.5641'] });
    expect(loggedReadingFor(value('0.5642', 'in'), [repeated])?.id).toBe(repeated.id);
    expect(loggedReadingFor(value('0.5650', 'in'), [repeated])).toBeNull();
  });

  it('of a temperature compared as a temperature, its step as a difference', () => {
    // 92 °C = 197.6 °F; a thermometer reading to 0.2 °F.
    const heard = value('92', 'degC');
    expect(loggedReadingFor(heard, [reading({ unit: 'degF', value: '197.6', resolution: '0.2', resolutionUnit: 'degF' })])).not.toBeNull();
    expect(loggedReadingFor(heard, [reading({ unit: 'degF', value: '197.9', resolution: '0.2', resolutionUnit: 'degF' })])).toBeNull();
  });
});
