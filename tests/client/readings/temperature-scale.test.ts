import { describe, expect, it } from 'vitest';
import { blankReadingForm, readingFormIssues, temperatureOf, toReadingInput } from '@/features/readings/lib/reading-form';

// t/°C = (t/°F − 32) / 1.8: NIST SP 811 (2008), B.8, "temperature"; the checks are points of that formula:
// water freezes at 32 °F = 0 °C, the length reference 68 °F = 20 °C (ISO 1), −40 °F = −40 °C.
describe('the reading form’s temperature in °F', () => {
  it('is sent in °C', () => {
    expect(temperatureOf('68', 'degF')).toBe(20);
    expect(temperatureOf('32', 'degF')).toBe(0);
    expect(temperatureOf('-40', 'degF')).toBe(-40);
    expect(temperatureOf('86', 'degF')).toBe(30);
    // (70.5 − 32) × 5/9 = 21.3888…, kept to a thousandth of a degree.
    expect(temperatureOf('70.5', 'degF')).toBe(21.389);
    expect(temperatureOf('21.5', 'degC')).toBe(21.5);
    expect(temperatureOf('', 'degF')).toBeNull();
    expect(temperatureOf('warm', 'degF')).toBe('warm');
  });

  it('reaches the API as °C, and a refusal names the range in the box’s own scale', () => {
    const values = { ...blankReadingForm(undefined, null, 'Rotor height', 'degF'), instrumentId: '7', value: '0.5642', temperatureC: '86', material: 'cast iron' };
    expect(toReadingInput(values, 3).temperatureC).toBe(30);
    const tooHot = readingFormIssues({ ...values, temperatureC: '900' }, []);
    expect(tooHot.find((i) => i.path === 'temperatureC')?.message).toMatch(/^enter a temperature from -?\d+ to \d+ °F, or leave it empty$/);
  });
});
