// The reader's first load reads error bodies and route ids without zod (src/lib/api.ts,
// src/lib/route-params.ts). These checks hold each hand-written reader to the shared schema it
// stands in for: same inputs accepted, same output.
import { describe, expect, it } from 'vitest';
import { z } from 'zod';
import { errorBodySchema } from '@shared/http/error.schema';
import { publicBuilderParamsSchema, publicBuildParamsSchema } from '@shared/public/public-build.schema';
import { publicStoryParamsSchema } from '@shared/public/public-story.schema';
import { partParamsSchema } from '@shared/public/sheet.schema';
import { readErrorBody } from '@/lib/api';
import { positiveIntParam, textParam } from '@/lib/route-params';

const errorBodies: unknown[] = [
  { error: { code: 'not_found', message: 'No such story.' } },
  { error: { code: 'bad_request', message: 'Check the fields.', details: [] } },
  { error: { code: 'bad_request', message: 'Check the fields.', details: [{ path: 'title', message: 'Required' }, { message: 'No path' }] } },
  { error: { code: 'x', message: 'y', details: [{ path: 'a', message: 'b', extra: 1 }], extra: true }, other: 1 },
  { error: { code: 'x', message: 'y', details: [{ path: undefined, message: 'b' }] } },
  { error: { code: 'x', message: 'y', details: undefined } },
  // Not error bodies:
  null,
  'Bad gateway',
  [],
  { error: 'not_found' },
  { error: null },
  { error: { code: 404, message: 'No.' } },
  { error: { code: 'x' } },
  { error: { code: 'x', message: 'y', details: 'none' } },
  { error: { code: 'x', message: 'y', details: [{ path: 3, message: 'b' }] } },
  { error: { code: 'x', message: 'y', details: [{ path: 'a' }] } },
  { error: { code: 'x', message: 'y', details: [null] } },
  { error: { code: 'x', message: 'y', details: {} } },
  { error: [] },
];

describe('readErrorBody reads what errorBodySchema reads', () => {
  it.each(errorBodies.map((body) => [JSON.stringify(body) ?? String(body), body]))('%s', (_name, body) => {
    const parsed = errorBodySchema.safeParse(body);
    const read = readErrorBody(body);
    if (parsed.success) {
      expect(read).toEqual(parsed.data.error);
    } else {
      expect(read).toBeNull();
    }
  });

  it('accepts real error bodies and refuses the rest (the list above has both)', () => {
    const accepted = errorBodies.filter((b) => readErrorBody(b) !== null).length;
    expect(accepted).toBe(6);
    expect(errorBodies.length - accepted).toBe(13);
  });
});

const idTexts = ['1', '42', ' 7 ', '007', '1e3', '0', '-3', '1.5', '', ' ', 'abc', '12abc', 'Infinity', '0x10', '9007199254740993', undefined];

describe('positiveIntParam reads ids as the shared params schemas do', () => {
  const schemas = [
    ['publicStoryParamsSchema', publicStoryParamsSchema, 'storyId'],
    ['publicBuildParamsSchema', publicBuildParamsSchema, 'buildId'],
    ['partParamsSchema', partParamsSchema, 'partId'],
  ] as const;
  for (const [name, schema, key] of schemas) {
    it.each(idTexts.map((t) => [JSON.stringify(t) ?? 'undefined', t]))(`${name}: %s`, (_label, text) => {
      const parsed = (schema as z.ZodType<Record<string, number>>).safeParse({ [key]: text });
      expect(positiveIntParam(text)).toBe(parsed.success ? parsed.data[key] : null);
    });
  }

  it('takes plain ids and refuses non-ids', () => {
    expect(positiveIntParam('42')).toBe(42);
    expect(positiveIntParam('0')).toBeNull();
    expect(positiveIntParam('12abc')).toBeNull();
  });
});

describe('textParam reads a builder login as publicBuilderParamsSchema does', () => {
  const logins = ['ines', ' ines ', '', '   ', 'a'.repeat(64), 'a'.repeat(65), ` ${'b'.repeat(64)} `, 'tern-works', undefined];
  it.each(logins.map((t) => [JSON.stringify(t) ?? 'undefined', t]))('%s', (_label, text) => {
    const parsed = publicBuilderParamsSchema.safeParse({ login: text });
    expect(textParam(text, 64)).toBe(parsed.success ? parsed.data.login : null);
  });
});
