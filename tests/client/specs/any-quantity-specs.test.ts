import { describe, expect, it } from 'vitest';
import { blankSpecFor } from '@/features/specs/lib/spec-form';
import { bandSummary, isLengthVersion, rejectSide } from '@/features/specs/lib/spec-format';

const figures = { min: null, max: null, preferredMin: null, preferredMax: null, reject: null };

describe('the spec library for every quantity', () => {
  it('says a band with its unit’s symbol, a ratio with none, and a length as before', () => {
    expect(bandSummary({ ...figures, unit: 'lbf_ft', min: '35', max: '40' })).toBe('35–40 lbf·ft');
    expect(bandSummary({ ...figures, unit: '1', min: '10.2', max: '10.8' })).toBe('10.2–10.8');
    expect(bandSummary({ ...figures, unit: 'deg', min: '106', max: '110' })).toBe('106–110°');
    expect(bandSummary({ ...figures, unit: 'cc', max: '64.5' })).toBe('at most 64.5 cc');
    expect(
      bandSummary({ unit: 'in', min: '0.0040', max: '0.0080', preferredMin: '0.0050', preferredMax: '0.0070', reject: '0.0100' }),
    ).toBe('0.0040–0.0080 in, preferred 0.0050–0.0070, reject above 0.0100');
    expect(bandSummary({ ...figures, unit: 'psi', min: '25', max: '30', reject: '20' })).toBe('25–30 psi, reject below 20');
  });

  it('finds the reject side exactly in any unit, and draws pictures for lengths only', () => {
    expect(rejectSide({ ...figures, unit: 'psi', min: '25', max: '30', reject: '30' })).toBe('above');
    expect(rejectSide({ ...figures, unit: 'psi', min: '25', max: '30', reject: '24.9' })).toBe('below');
    expect(isLengthVersion({ ...figures, unit: 'mm' })).toBe(true);
    expect(isLengthVersion({ ...figures, unit: '1' })).toBe(false);
  });

  it('starts a new spec in the builder’s length unit', () => {
    expect(blankSpecFor({ system: null, temperatureScale: null }).unit).toBe('in');
    expect(blankSpecFor({ system: 'metric', temperatureScale: null }).unit).toBe('mm');
  });
});
