import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { errorBodySchema } from '@shared/http/error.schema';
import { preferencesResponseSchema } from '@shared/public/follows.schema';
import { meResponseSchema } from '@shared/users/user.schema';
import { User } from '../../../server/features/users/user.model';
import { csrfToken, freshAccount, signIn, startTestApp, type TestApp } from '../../support/test-app';

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(() => t.close());

async function newBuilder() {
  const account = freshAccount(t, 'units');
  const agent = await signIn(t, account.login);
  const token = await csrfToken(agent);
  const patch = (body: object) => agent.patch('/api/me/preferences').set('x-csrf-token', token).send(body);
  const me = async () => meResponseSchema.parse((await agent.get('/api/me').expect(200)).body).user;
  return { agent, patch, me };
}

describe('a builder’s default units', () => {
  it('start not chosen, are saved with PATCH /api/me/preferences and read back from /api/me', async () => {
    const b = await newBuilder();
    expect(await b.me()).toMatchObject({ unitSystem: null, temperatureScale: null });

    const saved = preferencesResponseSchema.parse((await b.patch({ unitSystem: 'metric', temperatureScale: 'degF' }).expect(200)).body);
    expect(saved.preferences).toMatchObject({ unitSystem: 'metric', temperatureScale: 'degF', units: null, weeklyDigest: false });
    expect(await b.me()).toMatchObject({ unitSystem: 'metric', temperatureScale: 'degF' });

    // Only what is sent changes; the reader's switch pick and the digest are separate settings.
    await b.patch({ temperatureScale: 'degC' }).expect(200);
    await b.patch({ units: 'imperial' }).expect(200);
    expect(await b.me()).toMatchObject({ unitSystem: 'metric', temperatureScale: 'degC' });
    expect(preferencesResponseSchema.parse((await b.agent.get('/api/me/preferences').expect(200)).body).preferences).toEqual({
      units: 'imperial',
      weeklyDigest: false,
      unitSystem: 'metric',
      temperatureScale: 'degC',
    });

    // null clears a choice.
    await b.patch({ unitSystem: null }).expect(200);
    expect(await b.me()).toMatchObject({ unitSystem: null, temperatureScale: 'degC' });
  });

  it('does not touch the account’s updated_at, which keys the builder’s cached public pages', async () => {
    const b = await newBuilder();
    const { id } = await b.me();
    const before = (await User.findByPk(id))!.updatedAt.getTime();
    await b.patch({ unitSystem: 'imperial' }).expect(200);
    const after = (await User.findByPk(id))!;
    expect(after.unitSystem).toBe('imperial');
    expect(after.updatedAt.getTime()).toBe(before);
  });

  it.each([
    [{ unitSystem: 'furlongs' }, 'unitSystem'],
    [{ temperatureScale: 'kelvin' }, 'temperatureScale'],
    [{ temperatureScale: 'degF', unitSystem: 'cubits' }, 'unitSystem'],
  ])('refuses %j naming the field %s, and keeps what was stored', async (body, field) => {
    const b = await newBuilder();
    await b.patch({ unitSystem: 'imperial', temperatureScale: 'degC' }).expect(200);
    const res = await b.patch(body);
    expect(res.status).toBe(400);
    const error = errorBodySchema.parse(res.body).error;
    expect(error.code).toBe('invalid_request');
    expect(error.details.map((d) => d.path)).toEqual([field]);
    expect(error.details[0]!.message).toContain(field);
    expect(await b.me()).toMatchObject({ unitSystem: 'imperial', temperatureScale: 'degC' });
  });

  it('the database refuses a value the API would not send (CHECK constraints)', async () => {
    const b = await newBuilder();
    const { id } = await b.me();
    await expect(User.sequelize!.query(`UPDATE users SET unit_system = 'furlongs' WHERE id = ${id}`)).rejects.toThrow(/users_unit_system_check/);
    await expect(User.sequelize!.query(`UPDATE users SET temperature_scale = 'K' WHERE id = ${id}`)).rejects.toThrow(/users_temperature_scale_check/);
  });
});
