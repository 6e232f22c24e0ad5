import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { errorBodySchema } from '@shared/http/error.schema';
import {
  instrumentListResponseSchema,
  instrumentResponseSchema,
  instrumentSchema,
  type Instrument,
} from '@shared/instruments/instrument.schema';
import { csrfToken, signIn, startTestApp, type TestApp } from '../../support/test-app';

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(() => t.close());

type Session = { agent: ReturnType<typeof request.agent>; token: string };
async function as(login: string): Promise<Session> {
  const agent = await signIn(t, login);
  return { agent, token: await csrfToken(agent) };
}

const unique = (what: string) => `${what} ${process.pid}-${Math.floor(Math.random() * 1e9)}`;

async function makeInstrument(s: Session, body: Record<string, unknown> = {}): Promise<Instrument> {
  const res = await s.agent
    .post('/api/instruments')
    .set('x-csrf-token', s.token)
    .send({ name: unique('Test 0–1 in micrometer'), kind: 'outside-micrometer', unit: 'in', resolution: '0.0001', ...body });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  return instrumentResponseSchema.parse(res.body).instrument;
}

/** The field paths of a 400. */
function fields(res: request.Response): string[] {
  expect(res.status, JSON.stringify(res.body)).toBe(400);
  return [...new Set(errorBodySchema.parse(res.body).error.details.map((d) => d.path ?? ''))];
}

/**
 * A day `n` days from `day`, by milliseconds: POSIX time counts every UTC day as 86 400 s
 * (IEEE Std 1003.1, "Seconds Since the Epoch"), so this is independent of the calendar code
 * under test.
 */
function addDays(day: string, n: number): string {
  return new Date(Date.parse(`${day}T00:00:00Z`) + n * 86_400_000).toISOString().slice(0, 10);
}
const today = () => new Date().toISOString().slice(0, 10);

describe('a builder keeps an instrument register', () => {
  it('a builder registers an instrument; lengths are stored as plain decimal text in its unit', async () => {
    const ines = await as('demo-builder');
    const name = unique('Depth micrometer 0–6 in');
    const made = await makeInstrument(ines, {
      name,
      kind: 'depth-micrometer',
      serial: 'T-DM-1',
      resolution: '0.0001 in',
      statedUncertainty: '0.00005"',
      calibratedBy: 'Test gauge room (invented)',
    });
    expect(made).toMatchObject({ name, kind: 'depth-micrometer', serial: 'T-DM-1', unit: 'in', resolution: '0.0001', statedUncertainty: '0.00005' });
    expect(made).toMatchObject({ retired: false, needsZeroCheck: true, latestZeroCheck: null, lockVersion: 1 });

    const got = instrumentResponseSchema.parse((await ines.agent.get(`/api/instruments/${made.id}`).expect(200)).body).instrument;
    expect(got).toEqual(made);
  });

  it('a feeler blade set has no zero to check', async () => {
    const ines = await as('demo-builder');
    const blades = await makeInstrument(ines, { kind: 'feeler-blades', resolution: '0.0005' });
    expect(blades.needsZeroCheck).toBe(false);
  });

  it('the list is the caller’s own, in id order, a page at a time', async () => {
    const ines = await as('demo-builder');
    const tomasz = await as('demo-builder-2');
    const mine = [await makeInstrument(ines), await makeInstrument(ines), await makeInstrument(ines)];
    const theirs = await makeInstrument(tomasz, { unit: 'mm', resolution: '0.001' });

    const first = instrumentListResponseSchema.parse((await ines.agent.get(`/api/instruments?limit=2&after=${mine[0]!.id - 1}`).expect(200)).body);
    expect(first.items.map((i) => i.id)).toEqual([mine[0]!.id, mine[1]!.id]);
    expect(first.nextAfter).toBe(mine[1]!.id);
    const second = instrumentListResponseSchema.parse((await ines.agent.get(`/api/instruments?limit=2&after=${first.nextAfter}`).expect(200)).body);
    expect(second.items[0]!.id).toBe(mine[2]!.id);

    const all = instrumentListResponseSchema.parse((await ines.agent.get('/api/instruments?limit=200').expect(200)).body);
    expect(all.items.every((i) => i.ownerId === mine[0]!.ownerId)).toBe(true);
    expect(all.items.map((i) => i.id)).not.toContain(theirs.id);
    const ids = all.items.map((i) => i.id);
    expect(ids).toEqual([...ids].sort((a, b) => a - b));
  });

  it.each([
    ['a unit the engine cannot read', { unit: 'furlong' }, 'unit'],
    ['a resolution of 0', { resolution: '0' }, 'resolution'],
    ['a negative resolution', { resolution: '-0.0001' }, 'resolution'],
    ['a resolution the engine cannot read', { resolution: '0.0001 cubits' }, 'resolution'],
    ['a resolution in another unit than the instrument’s', { resolution: '0.001 mm' }, 'resolution'],
    ['more places than the unit holds exactly', { resolution: '0.000000001' }, 'resolution'],
    ['a negative stated uncertainty', { statedUncertainty: '-0.0001' }, 'statedUncertainty'],
    ['a calibration date that is not a date', { lastCalibratedOn: '2026-02-30' }, 'lastCalibratedOn'],
    ['no name', { name: '  ' }, 'name'],
  ])('registering with %s is refused, naming the field', async (_what, change, field) => {
    const ines = await as('demo-builder');
    const res = await ines.agent
      .post('/api/instruments')
      .set('x-csrf-token', ines.token)
      .send({ name: unique('Refused'), kind: 'outside-micrometer', unit: 'in', resolution: '0.0001', ...change });
    expect(fields(res)).toEqual([field]);
  });
});

describe('calibration state, judged on today (UTC)', () => {
  it('past its due date it is overdue; due date = last calibration + interval days', async () => {
    const ines = await as('demo-builder');
    const last = addDays(today(), -400);
    const i = await makeInstrument(ines, { lastCalibratedOn: last, calibrationIntervalDays: 365 });
    expect(i.calibrationDueOn).toBe(addDays(last, 365));
    expect(i.calibrationState).toBe('overdue');
  });

  it('inside its interval it is in date, up to and including the due day', async () => {
    const ines = await as('demo-builder');
    const fresh = await makeInstrument(ines, { lastCalibratedOn: today(), calibrationIntervalDays: 30 });
    expect(fresh).toMatchObject({ calibrationDueOn: addDays(today(), 30), calibrationState: 'in-date' });
    const dueToday = await makeInstrument(ines, { lastCalibratedOn: addDays(today(), -30), calibrationIntervalDays: 30 });
    expect(dueToday).toMatchObject({ calibrationDueOn: today(), calibrationState: 'in-date' });
  });

  it('without a last calibration or an interval there is no record', async () => {
    const ines = await as('demo-builder');
    expect(await makeInstrument(ines)).toMatchObject({ calibrationDueOn: null, calibrationState: 'no-record' });
    expect(await makeInstrument(ines, { lastCalibratedOn: today() })).toMatchObject({ calibrationDueOn: null, calibrationState: 'no-record' });
  });

  it('the seeded dial bore gauge (calibrated 2025-06-10, 365 days) shows the warning', async () => {
    const ines = await as('demo-builder');
    const list = instrumentListResponseSchema.parse((await ines.agent.get('/api/instruments?limit=200').expect(200)).body);
    const gauge = list.items.find((i) => i.serial === 'MV-BG-04');
    expect(gauge).toMatchObject({ kind: 'dial-bore-gauge', lastCalibratedOn: '2025-06-10', calibrationDueOn: '2026-06-10' });
    // Judged on today: overdue from 2026-06-11 on (the demo is set on 2026-12-02).
    expect(gauge!.calibrationState).toBe(today() > '2026-06-10' ? 'overdue' : 'in-date');
  });
});

describe('only the builder who keeps an instrument changes it', () => {
  it('another builder and a follower get 404 for it; a moderator and an admin read it but cannot change it (403)', async () => {
    const ines = await as('demo-builder');
    const i = await makeInstrument(ines);
    const url = `/api/instruments/${i.id}`;
    const patch = { name: 'Taken over', lockVersion: i.lockVersion };

    const tomasz = await as('demo-builder-2');
    expect((await tomasz.agent.get(url)).status).toBe(404);
    expect((await tomasz.agent.patch(url).set('x-csrf-token', tomasz.token).send(patch)).status).toBe(404);
    expect((await tomasz.agent.delete(url).set('x-csrf-token', tomasz.token)).status).toBe(404);
    expect((await tomasz.agent.get(`${url}/zero-checks`)).status).toBe(404);

    const sam = await as('demo-follower');
    expect((await sam.agent.get(url)).status).toBe(404);
    expect((await sam.agent.patch(url).set('x-csrf-token', sam.token).send(patch)).status).toBe(403);

    for (const login of ['demo-moderator', 'demo-admin']) {
      const reviewer = await as(login);
      expect((await reviewer.agent.get(url)).status).toBe(200);
      expect((await reviewer.agent.get(`${url}/zero-checks`)).status).toBe(200);
      const refused = await reviewer.agent.patch(url).set('x-csrf-token', reviewer.token).send(patch);
      expect(refused.status).toBe(403);
      expect(errorBodySchema.parse(refused.body).error.code).toBe('forbidden');
      expect((await reviewer.agent.delete(url).set('x-csrf-token', reviewer.token)).status).toBe(403);
    }

    const anonymous = request.agent(t.app);
    expect((await anonymous.get(url)).status).toBe(401);

    // None of those attempts changed anything.
    const after = instrumentResponseSchema.parse((await ines.agent.get(url).expect(200)).body).instrument;
    expect(after).toMatchObject({ name: i.name, lockVersion: 1 });
  });

  it('a follower or a moderator cannot register instruments (403)', async () => {
    for (const login of ['demo-follower', 'demo-moderator']) {
      const s = await as(login);
      const res = await s.agent.post('/api/instruments').set('x-csrf-token', s.token).send({ name: unique('Not theirs'), kind: 'caliper', unit: 'mm', resolution: '0.01' });
      expect(res.status).toBe(403);
      expect((await s.agent.get('/api/instruments')).status).toBe(403);
    }
  });
});

describe('editing an instrument', () => {
  it('a PATCH changes only what is sent and bumps the version', async () => {
    const ines = await as('demo-builder');
    const i = await makeInstrument(ines, { serial: 'KEEP-1', note: 'kept' });
    const res = await ines.agent.patch(`/api/instruments/${i.id}`).set('x-csrf-token', ines.token).send({ retired: true, lockVersion: 1 }).expect(200);
    expect(instrumentResponseSchema.parse(res.body).instrument).toMatchObject({ retired: true, serial: 'KEEP-1', note: 'kept', resolution: '0.0001', lockVersion: 2 });
  });

  it('two tabs from the same version: the second save is refused (409 edit_conflict) and nothing of it is stored', async () => {
    const ines = await as('demo-builder');
    const i = await makeInstrument(ines);
    const url = `/api/instruments/${i.id}`;
    await ines.agent.patch(url).set('x-csrf-token', ines.token).send({ name: 'First tab', lockVersion: i.lockVersion }).expect(200);
    const second = await ines.agent.patch(url).set('x-csrf-token', ines.token).send({ name: 'Second tab', note: 'from the second tab', lockVersion: i.lockVersion });
    expect(second.status).toBe(409);
    const body = errorBodySchema.parse(second.body);
    expect(body.error.code).toBe('edit_conflict');
    expect(body.error.details[0]?.path).toBe('lockVersion');
    const stored = instrumentResponseSchema.parse((await ines.agent.get(url).expect(200)).body).instrument;
    expect(stored).toMatchObject({ name: 'First tab', note: '', lockVersion: 2 });
  });

  it('a resolution sent alone is read in the instrument’s unit; one in another unit or of 0 is refused', async () => {
    const ines = await as('demo-builder');
    const i = await makeInstrument(ines);
    const url = `/api/instruments/${i.id}`;
    expect(fields(await ines.agent.patch(url).set('x-csrf-token', ines.token).send({ resolution: '0', lockVersion: 1 }))).toEqual(['resolution']);
    expect(fields(await ines.agent.patch(url).set('x-csrf-token', ines.token).send({ resolution: '0.01 mm', lockVersion: 1 }))).toEqual(['resolution']);
    const ok = await ines.agent.patch(url).set('x-csrf-token', ines.token).send({ resolution: '0.00005 in', lockVersion: 1 }).expect(200);
    expect(instrumentResponseSchema.parse(ok.body).instrument.resolution).toBe('0.00005');
  });

  it('changing the unit needs the resolution, and a stated uncertainty, sent in the new unit', async () => {
    const ines = await as('demo-builder');
    const i = await makeInstrument(ines, { statedUncertainty: '0.00005' });
    const url = `/api/instruments/${i.id}`;
    expect(fields(await ines.agent.patch(url).set('x-csrf-token', ines.token).send({ unit: 'mm', lockVersion: 1 }))).toEqual(['resolution']);
    expect(fields(await ines.agent.patch(url).set('x-csrf-token', ines.token).send({ unit: 'mm', resolution: '0.001', lockVersion: 1 }))).toEqual(['statedUncertainty']);
    const ok = await ines.agent.patch(url).set('x-csrf-token', ines.token).send({ unit: 'mm', resolution: '0.001', statedUncertainty: '0.0015', lockVersion: 1 }).expect(200);
    expect(instrumentResponseSchema.parse(ok.body).instrument).toMatchObject({ unit: 'mm', resolution: '0.001', statedUncertainty: '0.0015' });
  });
});

describe('deleting an instrument', () => {
  it('an instrument nothing uses is deleted (204) and is gone', async () => {
    const ines = await as('demo-builder');
    const i = await makeInstrument(ines);
    await ines.agent.delete(`/api/instruments/${i.id}`).set('x-csrf-token', ines.token).expect(204);
    await ines.agent.get(`/api/instruments/${i.id}`).expect(404);
  });

  it('one with a zero check is refused (409 instrument_in_use) and stays; retiring it works', async () => {
    const ines = await as('demo-builder');
    const i = await makeInstrument(ines);
    const url = `/api/instruments/${i.id}`;
    await ines.agent.post(`${url}/zero-checks`).set('x-csrf-token', ines.token).send({ checkedOn: today(), standardSize: '0', shown: '0.0000' }).expect(201);
    const res = await ines.agent.delete(url).set('x-csrf-token', ines.token);
    expect(res.status).toBe(409);
    const body = errorBodySchema.parse(res.body);
    expect(body.error.code).toBe('instrument_in_use');
    expect(body.error.message).toContain('retired=true');
    await ines.agent.get(url).expect(200);
    const retired = await ines.agent.patch(url).set('x-csrf-token', ines.token).send({ retired: true, lockVersion: 1 }).expect(200);
    expect(instrumentSchema.parse(retired.body.instrument).retired).toBe(true);
  });
});
