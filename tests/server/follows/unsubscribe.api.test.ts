import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { errorBodySchema } from '@shared/http/error.schema';
import { unsubscribeInfoSchema } from '@shared/mail/outbox.schema';
import { AuditEntry } from '../../../server/features/audit/audit.model';
import { Follow } from '../../../server/features/follows/follow.model';
import { signUnsubscribe, verifyUnsubscribe } from '../../../server/features/follows/unsubscribe-token';
import { sessionFor } from '../../support/matrix-fixtures';
import { sessionWithRole } from '../../support/review-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

/*
 * One-click unsubscribe (RFC 8058): the signed token in the List-Unsubscribe address is the only
 * authority, so the POST works without a session or CSRF token; GET only describes (mail
 * scanners follow links). The routes allow 60 requests a minute per address, so this file
 * stays well under that.
 */

let t: TestApp;
let followerId: number;
let builderId: number;

const error = (res: { body: unknown }) => errorBodySchema.parse(res.body).error;
const url = (token: string) => `/api/unsubscribe?token=${encodeURIComponent(token)}`;
const oneClick = (token: string) => request(t.app).post(url(token)).type('form').send('List-Unsubscribe=One-Click');
const follow = () => Follow.findOne({ where: { followerId, builderId } });

/** The same token with the character at `i` replaced by another base64url character. */
function changedAt(token: string, i: number): string {
  const alphabet = 'ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789-_';
  const c = token[i]!;
  // The neighbour in the alphabet differs from c in its lowest bit only: the hardest change to see.
  const other = alphabet[alphabet.indexOf(c) ^ 1]!;
  return token.slice(0, i) + other + token.slice(i + 1);
}

beforeAll(async () => {
  t = await startTestApp();
  const builder = await sessionFor(t, 'owner');
  builderId = (await builder.agent.get('/api/me').expect(200)).body.user.id;
  followerId = (await sessionWithRole(t, 'follower', 'unsub')).userId;
  await Follow.create({ followerId, builderId });
}, 60_000);

afterAll(async () => {
  await t?.close();
});

describe('the signed unsubscribe token', () => {
  it('names the follower and builder it was made for', () => {
    expect(verifyUnsubscribe(t.config.sessionSecret, signUnsubscribe(t.config.sessionSecret, 41, 7))).toEqual({ followerId: 41, builderId: 7 });
  });

  it('fails when any one character of the payload or the signature is changed, including the last', () => {
    const token = signUnsubscribe(t.config.sessionSecret, followerId, builderId);
    for (let i = 0; i < token.length; i += 1) {
      if (token[i] === '.') continue;
      expect(verifyUnsubscribe(t.config.sessionSecret, changedAt(token, i)), `position ${i}`).toBeNull();
    }
  });

  it('fails under another secret, with a part missing or one too many', () => {
    const token = signUnsubscribe(t.config.sessionSecret, followerId, builderId);
    expect(verifyUnsubscribe('another secret', token)).toBeNull();
    expect(verifyUnsubscribe(t.config.sessionSecret, token.split('.')[0]!)).toBeNull();
    expect(verifyUnsubscribe(t.config.sessionSecret, `${token}.x`)).toBeNull();
  });
});

describe('unsubscribing with one click', () => {
  it('GET describes what the link stops and never unsubscribes', async () => {
    const token = signUnsubscribe(t.config.sessionSecret, followerId, builderId);
    for (let i = 0; i < 2; i += 1) {
      const res = await request(t.app).get(url(token));
      expect(res.status).toBe(200);
      expect(res.headers['cache-control']).toBe('no-store');
      expect(unsubscribeInfoSchema.parse(res.body)).toMatchObject({ builderName: 'Ines Calloway', subscribed: true });
    }
    expect((await follow())!.emailOnPublish).toBe(true);
  });

  it('a tampered token (one character of payload or signature) is refused with 400 and changes nothing', async () => {
    const token = signUnsubscribe(t.config.sessionSecret, followerId, builderId);
    const dot = token.indexOf('.');
    for (const i of [0, dot - 1, dot + 1, token.length - 1]) {
      const res = await oneClick(changedAt(token, i));
      expect(res.status, `position ${i}`).toBe(400);
      expect(error(res).code).toBe('invalid_token');
    }
    expect((await request(t.app).get(url(changedAt(token, token.length - 1)))).status).toBe(400);
    expect((await follow())!.emailOnPublish).toBe(true);
  });

  it('POST turns the follow’s mail off, says so, keeps an audit line; a second POST is harmless', async () => {
    const token = signUnsubscribe(t.config.sessionSecret, followerId, builderId);
    const first = await oneClick(token);
    expect(first.status).toBe(200);
    expect(unsubscribeInfoSchema.parse(first.body)).toMatchObject({ builderName: 'Ines Calloway', subscribed: false });
    expect((await follow())!.emailOnPublish).toBe(false);
    const lines = await AuditEntry.findAll({ where: { action: 'follow.unsubscribe', actorId: followerId } });
    expect(lines.map((l) => [l.before, l.after])).toEqual([[{ emailOnPublish: true }, { emailOnPublish: false }]]);

    const second = await oneClick(token);
    expect(second.status).toBe(200);
    expect(second.body.subscribed).toBe(false);
    expect((await follow())!.emailOnPublish).toBe(false);
    expect(await AuditEntry.count({ where: { action: 'follow.unsubscribe', actorId: followerId } })).toBe(1);
    // The follow itself stays: only its mail is off.
    expect(await Follow.count({ where: { followerId, builderId } })).toBe(1);
  });

  it('works without a session or CSRF token (a mail client has neither), and refuses a missing token naming the field', async () => {
    const res = await request(t.app).post('/api/unsubscribe').type('form').send('List-Unsubscribe=One-Click');
    expect(res.status).toBe(400);
    expect(error(res).details[0]!.path).toBe('token');
  });

  it('a valid token for someone who does not follow the builder changes nothing', async () => {
    const stranger = await sessionWithRole(t, 'follower', 'unsub-stranger');
    const token = signUnsubscribe(t.config.sessionSecret, stranger.userId, builderId);
    const res = await oneClick(token);
    expect(res.status).toBe(200);
    expect(res.body.subscribed).toBe(false);
    expect(await Follow.count({ where: { followerId: stranger.userId } })).toBe(0);
  });
});
