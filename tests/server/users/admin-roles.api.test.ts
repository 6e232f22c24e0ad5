import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { errorBodySchema } from '@shared/http/error.schema';
import { listUsersResponseSchema } from '@shared/users/user.schema';
import { User } from '../../../server/features/users/user.model';
import { csrfToken, freshAccount, signIn, startTestApp, type TestApp } from '../../support/test-app';

let t: TestApp;
beforeAll(async () => {
  t = await startTestApp();
});
afterAll(() => t.close());

async function newFollower() {
  const account = freshAccount(t, 'member');
  const agent = await signIn(t, account.login);
  const id = (await agent.get('/api/me').expect(200)).body.user.id as number;
  return { account, agent, id };
}

describe('an admin changing roles', () => {
  it('an admin makes a follower a builder, and the change shows on their next request', async () => {
    const admin = await signIn(t, 'demo-admin');
    const member = await newFollower();
    const res = await admin
      .patch(`/api/admin/users/${member.id}`)
      .set('x-csrf-token', await csrfToken(admin))
      .send({ role: 'builder' })
      .expect(200);
    expect(res.body.user).toMatchObject({ id: member.id, role: 'builder' });
    expect((await member.agent.get('/api/me').expect(200)).body.user.role).toBe('builder');
  });

  it.each(['demo-builder', 'demo-moderator', 'demo-follower'])('%s may not change a role (403)', async (login) => {
    const agent = await signIn(t, login);
    const member = await newFollower();
    const res = await agent
      .patch(`/api/admin/users/${member.id}`)
      .set('x-csrf-token', await csrfToken(agent))
      .send({ role: 'admin' })
      .expect(403);
    expect(errorBodySchema.parse(res.body).error.code).toBe('forbidden');
    expect((await User.findByPk(member.id))!.role).toBe('follower');
  });

  it('a signed-out request gets 401 in the error contract', async () => {
    const res = await request(t.app).get('/api/admin/users').expect(401);
    expect(errorBodySchema.parse(res.body).error.code).toBe('unauthorized');
  });

  it('a role change without the CSRF token is refused (403) and nothing changes', async () => {
    const admin = await signIn(t, 'demo-admin');
    const member = await newFollower();
    const res = await admin.patch(`/api/admin/users/${member.id}`).send({ role: 'moderator' }).expect(403);
    expect(errorBodySchema.parse(res.body).error.code).toBe('csrf_invalid');
    expect((await User.findByPk(member.id))!.role).toBe('follower');
  });

  it('a role that does not exist is refused with 400 naming the field', async () => {
    const admin = await signIn(t, 'demo-admin');
    const member = await newFollower();
    const res = await admin
      .patch(`/api/admin/users/${member.id}`)
      .set('x-csrf-token', await csrfToken(admin))
      .send({ role: 'superuser' })
      .expect(400);
    const body = errorBodySchema.parse(res.body);
    expect(body.error.details.map((d) => d.path)).toContain('role');
  });

  it('an unknown user id gets 404', async () => {
    const admin = await signIn(t, 'demo-admin');
    await admin.patch('/api/admin/users/99999999').set('x-csrf-token', await csrfToken(admin)).send({ role: 'builder' }).expect(404);
  });

  it('the last admin cannot be demoted (409 last_admin)', async () => {
    const admin = await signIn(t, 'demo-admin');
    const token = await csrfToken(admin);
    const { items } = listUsersResponseSchema.parse((await admin.get('/api/admin/users?role=admin').expect(200)).body);
    // Other tests in this file may make admins; demote them all except demo-admin first.
    for (const u of items.filter((u) => u.login !== 'demo-admin')) {
      await admin.patch(`/api/admin/users/${u.id}`).set('x-csrf-token', token).send({ role: 'follower' }).expect(200);
    }
    const me = (await admin.get('/api/me')).body.user.id as number;
    const res = await admin.patch(`/api/admin/users/${me}`).set('x-csrf-token', token).send({ role: 'builder' }).expect(409);
    expect(errorBodySchema.parse(res.body).error.code).toBe('last_admin');
    expect((await User.findByPk(me))!.role).toBe('admin');
  });

  it('lists users page by page with a keyset cursor', async () => {
    const admin = await signIn(t, 'demo-admin');
    await newFollower();
    await newFollower();
    const first = listUsersResponseSchema.parse((await admin.get('/api/admin/users?limit=2').expect(200)).body);
    expect(first.items).toHaveLength(2);
    expect(first.nextAfter).toBe(first.items[1]!.id);
    const second = listUsersResponseSchema.parse((await admin.get(`/api/admin/users?limit=2&after=${first.nextAfter}`).expect(200)).body);
    expect(second.items[0]!.id).toBeGreaterThan(first.items[1]!.id);
  });
});
