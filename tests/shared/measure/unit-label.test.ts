import { describe, expect, it } from 'vitest';
import { lengthUnits, unitLabel } from '@shared/measure/units';
import { sentence } from '../../../server/features/review/review.emails';

describe('unitLabel', () => {
  it('names each unit once, with its symbol where the name does not already carry one', () => {
    expect(unitLabel('in')).toBe('inches (in)');
    expect(unitLabel('mm')).toBe('millimetres (mm)');
    expect(unitLabel('thou')).toBe('thou (0.001 in)');
    expect(unitLabel('tenth')).toBe('tenths (0.0001 in)');
    for (const unit of lengthUnits) expect(unitLabel(unit)).not.toMatch(/\)\s*\(/);
  });
});

describe('sentence (words people typed, in mail)', () => {
  it('ends with exactly one stop, whether or not one was typed', () => {
    expect(sentence('one reading needs another look')).toBe('one reading needs another look.');
    expect(sentence('one reading needs another look.')).toBe('one reading needs another look.');
    expect(sentence('  is the blade 0.004 in?  ')).toBe('is the blade 0.004 in?');
    expect(sentence('see “the still.”')).toBe('see “the still.”');
  });
});
