import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { buildResponseSchema, listBuildsResponseSchema } from '@shared/builds/build.schema';
import { errorBodySchema } from '@shared/http/error.schema';
import { csrfToken, signIn, startTestApp, type TestApp } from '../../support/test-app';

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(() => t.close());

describe('builds', () => {
  it('a builder creates a build with parts and serials, then finds it first in their list', async () => {
    const agent = await signIn(t, 'demo-builder');
    const token = await csrfToken(agent);
    const res = await agent
      .post('/api/builds')
      .set('x-csrf-token', token)
      .send({ title: 'Test twin, pump only', subject: 'invented', parts: [{ name: 'Oil pump', serial: 'TP-1' }, { name: 'Crank', serial: 'TC-2' }] })
      .expect(201);
    const { build } = buildResponseSchema.parse(res.body);
    expect(build.parts.map((p) => [p.name, p.serial])).toEqual([['Oil pump', 'TP-1'], ['Crank', 'TC-2']]);
    const list = listBuildsResponseSchema.parse((await agent.get('/api/builds?limit=1').expect(200)).body);
    expect(list.items[0]!.id).toBe(build.id);
    expect(list.nextBefore).toBe(build.id);
    const next = listBuildsResponseSchema.parse((await agent.get(`/api/builds?limit=1&before=${list.nextBefore}`).expect(200)).body);
    expect(next.items[0]!.id).toBeLessThan(build.id);
  });

  it('the builder edits the title and replaces the parts list', async () => {
    const agent = await signIn(t, 'demo-builder');
    const token = await csrfToken(agent);
    const { build } = buildResponseSchema.parse((await agent.post('/api/builds').set('x-csrf-token', token).send({ title: 'Before the edit' }).expect(201)).body);
    const res = await agent
      .patch(`/api/builds/${build.id}`)
      .set('x-csrf-token', token)
      .send({ title: 'After the edit', parts: [{ name: 'Thrust washer', serial: 'TW-9' }] })
      .expect(200);
    expect(buildResponseSchema.parse(res.body).build).toMatchObject({ title: 'After the edit', parts: [{ name: 'Thrust washer', serial: 'TW-9' }] });
  });

  it('parts sent back with their ids keep them; new ones are added, missing ones removed', async () => {
    const agent = await signIn(t, 'demo-builder');
    const token = await csrfToken(agent);
    const { build } = buildResponseSchema.parse(
      (await agent.post('/api/builds').set('x-csrf-token', token).send({ title: 'Part ids', parts: [{ name: 'Pump', serial: 'P1' }, { name: 'Crank', serial: 'C1' }] }).expect(201)).body,
    );
    const [pump, crank] = build.parts;
    const res = await agent
      .patch(`/api/builds/${build.id}`)
      .set('x-csrf-token', token)
      .send({ parts: [{ id: crank!.id, name: 'Crankshaft', serial: 'C1' }, { name: 'Thrust washer', serial: 'T1' }] })
      .expect(200);
    const parts = buildResponseSchema.parse(res.body).build.parts;
    expect(parts[0]).toEqual({ id: crank!.id, name: 'Crankshaft', serial: 'C1' });
    expect(parts[1]!.name).toBe('Thrust washer');
    expect(parts.map((p) => p.id)).not.toContain(pump!.id);
    const foreign = await agent.patch(`/api/builds/${build.id}`).set('x-csrf-token', token).send({ parts: [{ id: 999999, name: 'X' }] }).expect(400);
    expect(errorBodySchema.parse(foreign.body).error.details[0]?.path).toBe('parts.0.id');
  });

  it('a PATCH of the title alone leaves the subject and the parts as they were', async () => {
    const agent = await signIn(t, 'demo-builder');
    const token = await csrfToken(agent);
    const { build } = buildResponseSchema.parse(
      (await agent.post('/api/builds').set('x-csrf-token', token).send({ title: 'Partial patch', subject: 'kept', parts: [{ name: 'Pump', serial: 'P9' }] }).expect(201)).body,
    );
    const res = await agent.patch(`/api/builds/${build.id}`).set('x-csrf-token', token).send({ title: 'Partial patch, renamed' }).expect(200);
    expect(buildResponseSchema.parse(res.body).build).toMatchObject({ title: 'Partial patch, renamed', subject: 'kept', parts: build.parts });
  });

  it('a title that is too short is refused with the field named', async () => {
    const agent = await signIn(t, 'demo-builder');
    const res = await agent.post('/api/builds').set('x-csrf-token', await csrfToken(agent)).send({ title: 'x' }).expect(400);
    expect(errorBodySchema.parse(res.body).error.details[0]?.path).toBe('title');
  });

  it('another builder cannot see or change it (404), a moderator can see it, a follower cannot create builds (403)', async () => {
    const owner = await signIn(t, 'demo-builder');
    const { build } = buildResponseSchema.parse(
      (await owner.post('/api/builds').set('x-csrf-token', await csrfToken(owner)).send({ title: 'Private draft' }).expect(201)).body,
    );
    const other = await signIn(t, 'demo-builder-2');
    await other.get(`/api/builds/${build.id}`).expect(404);
    await other.patch(`/api/builds/${build.id}`).set('x-csrf-token', await csrfToken(other)).send({ title: 'Taken over' }).expect(404);
    const moderator = await signIn(t, 'demo-moderator');
    await moderator.get(`/api/builds/${build.id}`).expect(200);
    await moderator.patch(`/api/builds/${build.id}`).set('x-csrf-token', await csrfToken(moderator)).send({ title: 'Moderated' }).expect(403);
    const follower = await signIn(t, 'demo-follower');
    await follower.post('/api/builds').set('x-csrf-token', await csrfToken(follower)).send({ title: 'Not mine to make' }).expect(403);
    await request(t.app).get(`/api/builds/${build.id}`).expect(401);
  });
});
