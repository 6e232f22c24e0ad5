import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { all, create } from 'mathjs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { errorBodySchema } from '@shared/http/error.schema';
import {
  instrumentResponseSchema,
  zeroCheckListResponseSchema,
  zeroCheckResponseSchema,
  type Instrument,
  type ZeroCheck,
} from '@shared/instruments/instrument.schema';
import { ZeroCheck as ZeroCheckRow } from '../../../server/features/instruments/instrument.model';
import { zeroCheckOffset, zeroCheckOn } from '../../../server/features/instruments/instruments.service';
import { Reading } from '../../../server/features/readings/reading.model';
import { makeTestClip } from '../../support/clips';
import { uploadClip, waitUntilReady, type Session } from '../../support/matrix-fixtures';
import { csrfToken, signIn, startTestApp, type TestApp } from '../../support/test-app';

// Exact decimal arithmetic as an independent referee for the offsets.
const big = create(all ?? {}, { number: 'BigNumber', precision: 64 });
/**
 * Zero offset = indication on the setting standard − the standard's size: the instrument's error
 * at that point, "measured quantity value minus a reference quantity value" (JCGM 200:2012, VIM
 * 2.16 measurement error; definition recalled from memory), worked exactly in decimal.
 */
const referee = (shown: string, standard: string) => big.format(big.subtract(big.bignumber(shown), big.bignumber(standard)) as never, { notation: 'fixed' });

let t: TestApp;
let work: string;
let ines: Session;
let tomasz: Session;
let inesBuildId: number;
let inesMomentId: number;
let tomaszMomentId: number;

async function as(login: string): Promise<Session> {
  const agent = await signIn(t, login);
  return { agent, token: await csrfToken(agent) };
}
const unique = (what: string) => `${what} ${process.pid}-${Math.floor(Math.random() * 1e9)}`;
const today = () => new Date().toISOString().slice(0, 10);
/** A day `n` days from today, by milliseconds (POSIX time: every UTC day is 86 400 s). */
const dayFromToday = (n: number) => new Date(Date.parse(`${today()}T00:00:00Z`) + n * 86_400_000).toISOString().slice(0, 10);

async function makeInstrument(s: Session, body: Record<string, unknown> = {}): Promise<Instrument> {
  const res = await s.agent
    .post('/api/instruments')
    .set('x-csrf-token', s.token)
    .send({ name: unique('Zero-check micrometer'), kind: 'outside-micrometer', unit: 'in', resolution: '0.0001', ...body });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  return instrumentResponseSchema.parse(res.body).instrument;
}

async function logCheck(s: Session, instrumentId: number, body: Record<string, unknown>) {
  return s.agent.post(`/api/instruments/${instrumentId}/zero-checks`).set('x-csrf-token', s.token).send({ checkedOn: today(), ...body });
}

async function check(s: Session, instrumentId: number, body: Record<string, unknown>): Promise<ZeroCheck> {
  const res = await logCheck(s, instrumentId, body);
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  return zeroCheckResponseSchema.parse(res.body).zeroCheck;
}

function fields(res: { status: number; body: unknown }): string[] {
  expect(res.status, JSON.stringify(res.body)).toBe(400);
  return [...new Set(errorBodySchema.parse(res.body).error.details.map((d) => d.path ?? ''))];
}

async function buildWithMoment(s: Session, title: string, clipFile: string): Promise<{ buildId: number; momentId: number }> {
  const build = await s.agent.post('/api/builds').set('x-csrf-token', s.token).send({ title }).expect(201);
  const buildId = build.body.build.id as number;
  const clipId = await uploadClip(s, buildId, clipFile);
  await waitUntilReady(s, clipId);
  const moment = await s.agent.post(`/api/clips/${clipId}/moments`).set('x-csrf-token', s.token).send({ atMs: 500, label: 'micrometer closed on its standard' }).expect(201);
  return { buildId, momentId: moment.body.moment.id as number };
}

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-zero-checks-'));
  const clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work });
  t = await startTestApp({}, { jobs: true });
  ines = await as('demo-builder');
  tomasz = await as('demo-builder-2');
  ({ buildId: inesBuildId, momentId: inesMomentId } = await buildWithMoment(ines, unique('Zero-check build'), clipFile));
  ({ momentId: tomaszMomentId } = await buildWithMoment(tomasz, unique('Other builder’s zero-check build'), clipFile));
}, 240_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('a zero check records the offset exactly', () => {
  it.each([
    ['in', '0.0001', '1.0000', '1.0002', '0.0002'],
    ['in', '0.0001', '0', '-0.0001', '-0.0001'],
    ['in', '0.0001', '0', '0.0000', '0.0000'],
    ['in', '0.00005', '1', '0.99995', '-0.00005'],
    ['mm', '0.001', '25.000', '24.998', '-0.002'],
    ['mm', '0.001', '25', '25.003', '0.003'],
  ])('%s: standard %s… shown on %s, shown %s → offset %s', async (unit, resolution, standard, shown, offset) => {
    // Each expected offset is shown − standard exactly (VIM 2.16, see the referee above).
    expect(referee(shown, standard)).toBe(big.format(big.bignumber(offset), { notation: 'fixed' }));
    const instrument = await makeInstrument(ines, { unit, resolution });
    const z = await check(ines, instrument.id, { standardSize: standard, shown });
    expect(z).toMatchObject({ instrumentId: instrument.id, unit, standardSize: standard, shown, offset, momentId: null });
  });

  it('texts typed with the instrument’s unit are stored without it', async () => {
    const instrument = await makeInstrument(ines);
    const z = await check(ines, instrument.id, { standardSize: '1.0000 in', shown: '1.0002"' });
    expect(z).toMatchObject({ standardSize: '1.0000', shown: '1.0002', offset: '0.0002' });
  });

  it('zeroCheckOffset reads stored rows the same way', () => {
    // shown − standard = 0.5643 − 0.5640 = 0.0003 (VIM 2.16; the referee agrees).
    expect(referee('0.5643', '0.5640')).toBe('0.0003');
    const row = ZeroCheckRow.build({ instrumentId: 1, checkedOn: '2026-12-01', unit: 'in', standardSize: '0.5640', shown: '0.5643', momentId: null, createdBy: 1 });
    expect(zeroCheckOffset(row)).toBe('0.0003');
  });
});

describe('zero checks are refused with the field named', () => {
  it.each([
    ['a length in another unit than the instrument’s', { standardSize: '0', shown: '0.001 mm' }, 'shown'],
    ['a standard the engine cannot read', { standardSize: 'one inch', shown: '1.0001' }, 'standardSize'],
    ['a negative standard', { standardSize: '-1.0000', shown: '1.0001' }, 'standardSize'],
    ['a date that is not a date', { checkedOn: '2026-02-30', standardSize: '0', shown: '0.0001' }, 'checkedOn'],
    ['a moment that does not exist', { standardSize: '0', shown: '0.0001', momentId: 2_000_000_000 }, 'momentId'],
  ])('%s', async (_what, body, field) => {
    const instrument = await makeInstrument(ines);
    expect(fields(await logCheck(ines, instrument.id, body))).toEqual([field]);
  });

  it('a moment of another builder’s build is refused (400 naming momentId); one of the caller’s own is kept', async () => {
    const instrument = await makeInstrument(ines);
    expect(fields(await logCheck(ines, instrument.id, { standardSize: '0', shown: '0.0001', momentId: tomaszMomentId }))).toEqual(['momentId']);
    const z = await check(ines, instrument.id, { standardSize: '0', shown: '0.0001', momentId: inesMomentId });
    expect(z.momentId).toBe(inesMomentId);
  });

  it('only the builder who keeps the instrument logs checks on it', async () => {
    const instrument = await makeInstrument(ines);
    expect((await logCheck(tomasz, instrument.id, { standardSize: '0', shown: '0' })).status).toBe(404);
    const moderator = await as('demo-moderator');
    expect((await logCheck(moderator, instrument.id, { standardSize: '0', shown: '0' })).status).toBe(403);
    const admin = await as('demo-admin');
    expect((await logCheck(admin, instrument.id, { standardSize: '0', shown: '0' })).status).toBe(403);
    const list = zeroCheckListResponseSchema.parse((await ines.agent.get(`/api/instruments/${instrument.id}/zero-checks`).expect(200)).body);
    expect(list.items).toEqual([]);
  });
});

describe('the checks of an instrument', () => {
  it('are listed newest first (by day, then by entry), a page at a time; the instrument shows the newest', async () => {
    const instrument = await makeInstrument(ines);
    const older = await check(ines, instrument.id, { checkedOn: dayFromToday(-3), standardSize: '0', shown: '0.0001' });
    const newestDay = await check(ines, instrument.id, { checkedOn: dayFromToday(-1), standardSize: '0', shown: '0.0002' });
    // Entered last but for an earlier day: listed by its day, not by when it was typed.
    const lateEntry = await check(ines, instrument.id, { checkedOn: dayFromToday(-2), standardSize: '0', shown: '0.0003' });
    const sameDayAgain = await check(ines, instrument.id, { checkedOn: dayFromToday(-1), standardSize: '0', shown: '0.0000' });

    const url = `/api/instruments/${instrument.id}/zero-checks`;
    const all = zeroCheckListResponseSchema.parse((await ines.agent.get(url).expect(200)).body);
    expect(all.items.map((z) => z.id)).toEqual([sameDayAgain.id, newestDay.id, lateEntry.id, older.id]);
    expect(all.nextBefore).toBeNull();

    const page1 = zeroCheckListResponseSchema.parse((await ines.agent.get(`${url}?limit=2`).expect(200)).body);
    expect(page1.items.map((z) => z.id)).toEqual([sameDayAgain.id, newestDay.id]);
    const page2 = zeroCheckListResponseSchema.parse((await ines.agent.get(`${url}?limit=2&before=${page1.nextBefore}`).expect(200)).body);
    expect(page2.items.map((z) => z.id)).toEqual([lateEntry.id, older.id]);

    const shown = instrumentResponseSchema.parse((await ines.agent.get(`/api/instruments/${instrument.id}`).expect(200)).body).instrument;
    expect(shown.latestZeroCheck).toEqual(sameDayAgain);

    // The readings feature asks for the day's check: the one entered last that day, or none.
    expect((await zeroCheckOn(instrument.id, dayFromToday(-1)))?.id).toBe(sameDayAgain.id);
    expect((await zeroCheckOn(instrument.id, dayFromToday(-2)))?.id).toBe(lateEntry.id);
    expect(await zeroCheckOn(instrument.id, today())).toBeNull();
  });

  it('a reviewer reads them; another builder gets 404', async () => {
    const instrument = await makeInstrument(ines);
    await check(ines, instrument.id, { standardSize: '0', shown: '0.0001' });
    const moderator = await as('demo-moderator');
    const list = zeroCheckListResponseSchema.parse((await moderator.agent.get(`/api/instruments/${instrument.id}/zero-checks`).expect(200)).body);
    expect(list.items).toHaveLength(1);
    await tomasz.agent.get(`/api/instruments/${instrument.id}/zero-checks`).expect(404);
  });
});

describe('an instrument with a reading taken with it', () => {
  it('cannot be deleted (409 instrument_in_use); it stays', async () => {
    const instrument = await makeInstrument(ines);
    const me = await ines.agent.get('/api/me').expect(200);
    // Written straight to the table, so this refusal does not depend on the readings routes.
    await Reading.create({
      buildId: inesBuildId,
      momentId: inesMomentId,
      instrumentId: instrument.id,
      partId: null,
      key: `in-use-${Math.floor(Math.random() * 1e9)}`,
      name: 'Bore depth',
      kind: 'direct',
      unit: 'in',
      value: '0.5642',
      passes: null,
      stops: null,
      repeatedValues: null,
      entered: { value: '0.5642' },
      temperatureC: null,
      material: null,
      takenOn: today(),
      createdBy: me.body.user.id,
      updatedBy: me.body.user.id,
    });
    const res = await ines.agent.delete(`/api/instruments/${instrument.id}`).set('x-csrf-token', ines.token);
    expect(res.status).toBe(409);
    expect(errorBodySchema.parse(res.body).error.code).toBe('instrument_in_use');
    await ines.agent.get(`/api/instruments/${instrument.id}`).expect(200);
  });
});
