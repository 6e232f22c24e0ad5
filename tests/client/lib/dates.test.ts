import { describe, expect, it } from 'vitest';
import { clockTime, dateTimeAttr, dayText, isoDayAndClock, isoDayOf, longDayText, sinceText } from '../../../src/lib/dates';

/*
 * The client's dates: a calendar day is shown as the day it is wherever the reader is (formatted
 * in UTC), an instant in the reader's zone; anything that is not a date is shown as given.
 */

describe('dates', () => {
  it('shows a calendar day as that day, in short and in full', () => {
    expect(dayText('2026-11-20')).toMatch(/20/);
    expect(dayText('2026-11-20')).toMatch(/2026/);
    expect(dayText('2026-11-20')).toMatch(/Nov/);
    expect(longDayText('2026-11-20')).toMatch(/November/);
    // A timestamp's calendar part is the day.
    expect(dayText('2026-11-20T23:59:59Z')).toBe(dayText('2026-11-20'));
    expect(dayText('not a day')).toBe('not a day');
  });

  it('shows instants in ISO order for tables, and a 24-hour clock', () => {
    expect(isoDayAndClock('2026-11-20T14:05:00Z')).toMatch(/^\d{4}-\d{2}-\d{2} \d{2}:\d{2}$/);
    expect(isoDayOf('2026-11-20T14:05:00Z')).toMatch(/^\d{4}-\d{2}-\d{2}$/);
    expect(clockTime('2026-11-20T14:05:00Z')).toMatch(/^\d{2}:\d{2}$/);
    expect(clockTime('soon')).toBe('soon');
  });

  it('says only the time for today, and the day with it otherwise', () => {
    const now = new Date('2026-11-20T15:00:00');
    expect(sinceText(new Date('2026-11-20T14:05:00').toISOString(), now)).toBe(clockTime(new Date('2026-11-20T14:05:00').toISOString()));
    expect(sinceText(new Date('2026-11-18T09:30:00').toISOString(), now)).toMatch(/18.*, \d{2}:\d{2}$/);
  });

  it('gives <time> a day as it is and an instant in ISO form', () => {
    expect(dateTimeAttr('2026-11-20')).toBe('2026-11-20');
    expect(dateTimeAttr('2026-11-20T14:05:00+01:00')).toBe('2026-11-20T13:05:00.000Z');
  });
});
