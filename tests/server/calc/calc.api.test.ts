import express from 'express';
import fc from 'fast-check';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { errorBodySchema } from '@shared/http/error.schema';
import { calcResponseSchema } from '@shared/measure/calc.schema';
import { createCalcRouter } from '../../../server/features/calc/calc.routes';
import { errorHandler } from '../../../server/http/error-handler';
import { startTestApp, type TestApp } from '../../support/test-app';

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(() => t.close());

const endFloat = {
  readings: {
    boreDepth: { kind: 'direct', value: 0.5642, unit: 'in', resolution: 0.0001 },
    componentHeight: { kind: 'direct', value: 0.5595, unit: 'in', resolution: 0.0001 },
  },
  terms: [
    { reading: 'boreDepth', sign: 1 },
    { reading: 'componentHeight', sign: -1 },
  ],
  spec: { min: 0.003, max: 0.005, unit: 'in' },
};

const post = (body: unknown) => request(t.app).post('/api/calc').set('Content-Type', 'application/json').send(JSON.stringify(body));

describe('POST /api/calc, the public calculator', () => {
  it('works out an end float for anyone, without a cookie or a CSRF token', async () => {
    const res = await post(endFloat).expect(200);
    const body = calcResponseSchema.parse(res.body);
    // 0.5642 in − 0.5595 in = 0.0047 in = 119.38 µm exactly (1 in = 25.4 mm, NIST SP 811);
    // ≈ 0.0047 in end float is common practice (no published source).
    expect(body.value_um).toBe(119.38);
    // u = √2 × 2.54 µm/(2√3) (GUM F.2.2.1 and eq. 10).
    expect(body.standardUncertainty_um).toBeCloseTo((Math.SQRT2 * 2.54) / (2 * Math.sqrt(3)), 12);
    // Two equal rectangular resolutions (half-width a = 1.27 µm) add to a triangular distribution of
    // half-width 2a, whose 95 % interval is ±2a(1 − √0.05) = ±1.972 µm (JCGM 101:2008 6.4.2, the
    // trapezoidal family with equal widths); the Monte Carlo run finds it within its tolerance.
    expect(body.method).toBe('monte-carlo');
    expect(body.expandedUncertainty_um!).toBeCloseTo(2.54 * (1 - Math.sqrt(0.05)), 1);
    expect(body.coverageProbability).toBe(0.95);
    expect(body.budget).toHaveLength(2);
    expect(body.verdict).toBe('conforms');
    expect(body.steps.at(-1)).toMatch(/within spec.*ISO 14253-1/);
    expect(res.headers['set-cookie']).toBeUndefined();
  });

  it('still expands by a chosen k exactly: U = k·u_c (GUM 6.2.1)', async () => {
    const body = calcResponseSchema.parse((await post({ ...endFloat, coverageFactor: 2 }).expect(200)).body);
    expect(body.method).toBe('gum');
    expect(body.expandedUncertainty_um!).toBeCloseTo(2 * body.standardUncertainty_um!, 12);
    expect(body.coverageFactor).toBeCloseTo(2, 12);
  });

  it('keeps the trailing zeros of a figure sent as text and refuses a number JSON would round', async () => {
    const asText = calcResponseSchema.parse(
      (await post({ readings: { d: { kind: 'direct', value: '0.5640', unit: 'in' } }, terms: [{ reading: 'd', sign: 1 }] }).expect(200)).body,
    );
    // "0.5640" says 0.0001 in resolution: u = 2.54 µm/(2√3) (GUM F.2.2.1), not 25.4 µm/(2√3).
    expect(asText.standardUncertainty_um).toBeCloseTo(2.54 / (2 * Math.sqrt(3)), 12);
    const raw = '{"readings":{"d":{"kind":"direct","value":0.123456789012345678901234567890,"unit":"mm"}},"terms":[{"reading":"d","sign":1}]}';
    const refused = await request(t.app).post('/api/calc').set('Content-Type', 'application/json').send(raw).expect(400);
    const error = errorBodySchema.parse(refused.body).error;
    expect(error.details?.[0]?.path).toBe('readings.d.value');
    expect(error.details?.[0]?.message).toMatch(/more digits than a JSON number can hold.*decimal string/);
  });

  it('answers a feeler-blade bracket with no spec and a null verdict', async () => {
    const res = await post({
      readings: { gap: { kind: 'bracket', passes: 0.003, stops: 0.004, unit: 'in' } },
      terms: [{ reading: 'gap', sign: 1 }],
    }).expect(200);
    // 0.003 in passes / 0.004 in stops ≈ 0.0035 in: common practice (no published source); 88.9 µm exactly.
    expect(res.body.value_um).toBe(88.9);
    expect(res.body.standardUncertainty_um).toBeCloseTo(12.7 / Math.sqrt(3), 12); // GUM 4.3.7
    expect(res.body.verdict).toBeNull();
  });

  it('still needs no CSRF token from a browser that holds a session', async () => {
    const agent = request.agent(t.app);
    await agent.get('/api/csrf-token').expect(200); // creates the session cookie
    await agent.post('/api/calc').send(endFloat).expect(200);
  });

  it.each([
    ['an unknown unit', { ...endFloat, spec: { ...endFloat.spec, unit: 'ft' } }, 'spec.unit'],
    ['a term naming a missing reading', { ...endFloat, terms: [{ reading: 'deck', sign: 1 }] }, 'terms.0.reading'],
    [
      'a bracket whose stops is not above passes',
      { readings: { g: { kind: 'bracket', passes: 0.004, stops: 0.004, unit: 'in' } }, terms: [{ reading: 'g', sign: 1 }] },
      'readings.g.stops',
    ],
    [
      'a negative resolution',
      { ...endFloat, readings: { ...endFloat.readings, boreDepth: { ...endFloat.readings.boreDepth, resolution: -0.0001 } } },
      'readings.boreDepth.resolution',
    ],
    [
      'a length over 2 m',
      { ...endFloat, readings: { ...endFloat.readings, boreDepth: { ...endFloat.readings.boreDepth, value: 100 } } },
      'readings.boreDepth.value',
    ],
    [
      'too many values',
      { readings: { r: { kind: 'repeated', values: Array.from({ length: 1001 }, () => 1), unit: 'mm' } }, terms: [{ reading: 'r', sign: 1 }] },
      'readings.r.values',
    ],
    ['spec min above max', { ...endFloat, spec: { min: 0.005, max: 0.003, unit: 'in' } }, 'spec.min'],
    ['a coverage factor out of range', { ...endFloat, coverageFactor: 50 }, 'coverageFactor'],
  ])('refuses %s with 400 naming the field', async (_, body, path) => {
    const res = await post(body).expect(400);
    const error = errorBodySchema.parse(res.body).error;
    expect(error.code).toBe('invalid_request');
    expect(error.details.map((d) => d.path)).toContain(path);
    expect(error.message).toContain(path);
  });

  it('refuses NaN and Infinity, which JSON can only carry as null or text', async () => {
    const res = await request(t.app)
      .post('/api/calc')
      .set('Content-Type', 'application/json')
      .send('{"readings":{"a":{"kind":"direct","value":null,"unit":"in"}},"terms":[{"reading":"a","sign":1}]}')
      .expect(400);
    expect(res.body.error.details).toContainEqual(expect.objectContaining({ path: 'readings.a.value' }));
  });

  it('answers a body that is not JSON with 400', async () => {
    const res = await request(t.app).post('/api/calc').set('Content-Type', 'application/json').send('{"readings":').expect(400);
    expect(errorBodySchema.parse(res.body).error.code).toBe('bad_request');
  });

  it('never answers 500, whatever JSON it is sent', async () => {
    await fc.assert(
      fc.asyncProperty(fc.jsonValue({ maxDepth: 4 }), async (junk) => {
        const res = await post({ readings: junk, terms: [{ reading: 'a', sign: 1 }] });
        expect([200, 400]).toContain(res.status);
        errorBodySchema.parse(res.body);
      }),
      { numRuns: 40 },
    );
  });
});

describe('the calculator rate limit', () => {
  it('answers 429 in the error contract once an address has used its allowance', async () => {
    // Its own small app so the real app's allowance is left for the tests above.
    const app = express();
    app.use(express.json());
    app.use('/api/calc', createCalcRouter({ limit: 2, windowMs: 60_000 }));
    app.use(errorHandler);
    await request(app).post('/api/calc').send(endFloat).expect(200);
    await request(app).post('/api/calc').send(endFloat).expect(200);
    const res = await request(app).post('/api/calc').send(endFloat).expect(429);
    expect(errorBodySchema.parse(res.body).error.code).toBe('rate_limited');
  });
});
