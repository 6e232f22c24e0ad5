import { describe, expect, it } from 'vitest';
import { headerWords, importFields, mapColumns, readingImportRequestSchema, secondsToMs, splitValues } from '@shared/readings/reading-import.schema';
import { readingCsvColumns } from '@shared/readings/reading.schema';

describe('mapping a file’s columns to reading fields', () => {
  it('maps every column of the export to the field of the same name, and leaves the worked-out columns alone', () => {
    const mapping = mapColumns([...readingCsvColumns]);
    for (const f of importFields) expect(mapping[f]).toBe(f);
    expect(Object.values(mapping)).not.toContain('estimate');
    expect(Object.values(mapping)).not.toContain('review_state');
    expect(Object.values(mapping)).not.toContain('logged_by');
  });

  it('reads a spreadsheet’s own headers by their usual names, whatever their case and spacing', () => {
    const mapping = mapColumns(['Reading', 'Gauge', 'Time (s)', 'DATE', 'Part Name', 'Notes', 'Temp']);
    expect(mapping).toMatchObject({
      value: 'Reading',
      instrument: 'Gauge',
      at_s: 'Time (s)',
      taken_on: 'DATE',
      part: 'Part Name',
      note: 'Notes',
      temperature_c: 'Temp',
      name: null,
      key: null,
      clip: null,
    });
  });

  it('prefers the export’s own name to an alias, and gives a column to one field only', () => {
    const mapping = mapColumns(['figure', 'value', 'time', 'at']);
    expect(mapping.value).toBe('value');
    expect(mapping.at_s).toBe('time');
  });

  it('takes the columns chosen by hand field by field, and a column chosen by hand is not mapped again', () => {
    const mapping = mapColumns(['What', 'Reading', 'Gauge', 'Time'], { name: 'What', instrument: null, value: 'Gauge', at_s: 'Time' });
    expect(mapping).toMatchObject({ name: 'What', instrument: null, value: 'Gauge', at_s: 'Time' });
    expect(Object.values(mapping).filter((c) => c === 'Gauge')).toHaveLength(1);
  });

  it('compares headers without a byte-order mark, case or punctuation', () => {
    expect(headerWords('\uFEFFKey')).toBe('key');
    expect(headerWords(' Taken-On ')).toBe('taken_on');
    expect(headerWords('Temperature (°C)')).toBe('temperature_°c');
  });
});

describe('cells a spreadsheet writes', () => {
  it('splits repeated values on spaces, keeping a unit with its number, or on semicolons', () => {
    expect(splitValues('0.5642 0.5643 0.5641')).toEqual(['0.5642', '0.5643', '0.5641']);
    expect(splitValues('0.5642 in 0.5643 in')).toEqual(['0.5642 in', '0.5643 in']);
    expect(splitValues('14.331 mm; 14.332 mm')).toEqual(['14.331 mm', '14.332 mm']);
    expect(splitValues('-0.002 0.001')).toEqual(['-0.002', '0.001']);
  });

  it('reads a time in the clip as seconds or minutes:seconds, to the millisecond', () => {
    expect(secondsToMs('1.900')).toBe(1900);
    expect(secondsToMs('12.4 s')).toBe(12400);
    expect(secondsToMs('1:05.2')).toBe(65200);
    expect(secondsToMs('0:01:05')).toBe(65000);
    expect(secondsToMs('soon')).toBeNull();
    expect(secondsToMs('-1')).toBeNull();
  });

  it('refuses a file over 5 MB in the body schema, in words that say what to do', () => {
    const res = readingImportRequestSchema.safeParse({ csv: 'x'.repeat(5 * 1024 * 1024 + 1), store: false });
    expect(res.success).toBe(false);
    expect(res.error?.issues[0]?.message).toMatch(/larger than 5 MB: split it/);
    expect(readingImportRequestSchema.safeParse({ csv: 'x'.repeat(5 * 1024 * 1024), store: false }).success).toBe(true);
  });
});
