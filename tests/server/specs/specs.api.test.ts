import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { errorBodySchema } from '@shared/http/error.schema';
import {
  specListResponseSchema,
  specResponseSchema,
  specVersionResponseSchema,
  type LibrarySpec,
} from '@shared/specs/spec-library.schema';
import { AppError } from '../../../server/http/errors';
import { latestVersionNumbers, specVersionUsableBy, toSpecVersionDto } from '../../../server/features/specs/specs.service';
import { User } from '../../../server/features/users/user.model';
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

/** A version body: figures only. */
const versionBody = () => ({ unit: 'in', min: '0.0020', max: '0.0045', source: { kind: 'manual', text: 'Test engine workshop manual (invented), 2nd edition' } });

/** An invented spec body; figures in inches. */
function specBody(change: Record<string, unknown> = {}) {
  return {
    name: unique('Test pump rotor end float'),
    appliesTo: 'Test engine oil pump (invented)',
    unit: 'in',
    min: '0.0020',
    max: '0.0040',
    preferredMin: '0.0025',
    preferredMax: '0.0035',
    reject: '0.0050',
    source: { kind: 'manual', text: 'Test engine workshop manual (invented), section 1.1' },
    ...change,
  };
}

async function makeSpec(s: Session, change: Record<string, unknown> = {}): Promise<LibrarySpec> {
  const res = await s.agent.post('/api/specs').set('x-csrf-token', s.token).send(specBody(change));
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  return specResponseSchema.parse(res.body).spec;
}

function fields(res: request.Response): string[] {
  expect(res.status, JSON.stringify(res.body)).toBe(400);
  return [...new Set(errorBodySchema.parse(res.body).error.details.map((d) => d.path ?? ''))];
}

async function listAll(s: Session, query = ''): Promise<LibrarySpec[]> {
  const items: LibrarySpec[] = [];
  let after: number | null = null;
  do {
    const res = await s.agent.get(`/api/specs?limit=100${query}${after ? `&after=${after}` : ''}`).expect(200);
    const page = specListResponseSchema.parse(res.body);
    items.push(...page.items);
    after = page.nextAfter;
  } while (after !== null);
  return items;
}

describe('the spec library', () => {
  it('a builder makes a spec: version 1, figures stored as typed in its unit', async () => {
    const ines = await as('demo-builder');
    const spec = await makeSpec(ines, { min: '0.0020 in', max: '0.0040"' });
    expect(spec).toMatchObject({ shared: false, lockVersion: 1, ownerName: 'Ines Calloway' });
    expect(spec.latest).toMatchObject({
      version: 1,
      unit: 'in',
      min: '0.0020',
      max: '0.0040',
      preferredMin: '0.0025',
      preferredMax: '0.0035',
      reject: '0.0050',
      rule: 'guarded',
      source: { kind: 'manual', text: 'Test engine workshop manual (invented), section 1.1' },
    });
    expect(spec.versions?.map((v) => v.version)).toEqual([1]);
    const got = specResponseSchema.parse((await ines.agent.get(`/api/specs/${spec.id}`).expect(200)).body).spec;
    expect(got).toEqual(spec);
  });

  it.each([
    ['a unit the engine cannot read', { unit: 'furlong' }, 'unit'],
    ['a figure the engine cannot read', { min: 'two thou' }, 'min'],
    ['a figure in another unit', { max: '0.1 mm' }, 'max'],
    ['a preferred band outside the band', { preferredMin: '0.0010' }, 'preferredMin'],
    ['a reject limit inside the band', { reject: '0.0030' }, 'reject'],
    ['min greater than max', { min: '0.0045', preferredMin: null, preferredMax: null, reject: null }, 'min'],
    ['neither min nor max', { min: null, max: null, preferredMin: null, preferredMax: null, reject: null }, 'min'],
    ['no source', { source: undefined }, 'source'],
    ['a source that says nothing', { source: { kind: 'manual', text: '' } }, 'source.text'],
    ['a name too short', { name: 'x' }, 'name'],
  ])('a spec with %s is refused, naming the field', async (_what, change, field) => {
    const ines = await as('demo-builder');
    expect(fields(await ines.agent.post('/api/specs').set('x-csrf-token', ines.token).send(specBody(change)))).toEqual([field]);
  });

  it('only builders make specs (a follower and a moderator get 403; a visitor 401)', async () => {
    for (const login of ['demo-follower', 'demo-moderator']) {
      const s = await as(login);
      expect((await s.agent.post('/api/specs').set('x-csrf-token', s.token).send(specBody())).status).toBe(403);
    }
    const visitor = request.agent(t.app);
    const token = await csrfToken(visitor);
    expect((await visitor.post('/api/specs').set('x-csrf-token', token).send(specBody())).status).toBe(401);
    expect((await visitor.get('/api/specs')).status).toBe(401);
  });
});

describe('who sees which spec', () => {
  it('an unshared spec: its owner and reviewers see it; another builder and a follower get 404 and do not find it', async () => {
    const ines = await as('demo-builder');
    const spec = await makeSpec(ines);
    const url = `/api/specs/${spec.id}`;
    for (const login of ['demo-builder-2', 'demo-follower']) {
      const s = await as(login);
      expect((await s.agent.get(url)).status).toBe(404);
      expect((await listAll(s)).map((x) => x.id)).not.toContain(spec.id);
    }
    for (const login of ['demo-moderator', 'demo-admin']) {
      const s = await as(login);
      expect((await s.agent.get(url)).status).toBe(200);
      expect((await listAll(s)).map((x) => x.id)).toContain(spec.id);
    }
  });

  it('a shared spec: everyone signed in reads it; only its owner changes it (others 403)', async () => {
    const ines = await as('demo-builder');
    const spec = await makeSpec(ines, { shared: true });
    const url = `/api/specs/${spec.id}`;
    for (const login of ['demo-builder-2', 'demo-follower', 'demo-moderator', 'demo-admin']) {
      const s = await as(login);
      expect((await s.agent.get(url)).status).toBe(200);
      expect((await listAll(s)).map((x) => x.id)).toContain(spec.id);
    }
    for (const login of ['demo-builder-2', 'demo-admin']) {
      const s = await as(login);
      expect((await s.agent.patch(url).set('x-csrf-token', s.token).send({ name: 'Taken over', lockVersion: 1 })).status).toBe(403);
      expect((await s.agent.post(`${url}/versions`).set('x-csrf-token', s.token).send(versionBody())).status).toBe(403);
    }
    for (const login of ['demo-follower', 'demo-moderator']) {
      const s = await as(login);
      expect((await s.agent.patch(url).set('x-csrf-token', s.token).send({ name: 'Taken over', lockVersion: 1 })).status).toBe(403);
      expect((await s.agent.post(`${url}/versions`).set('x-csrf-token', s.token).send(versionBody())).status).toBe(403);
    }
    const after = specResponseSchema.parse((await ines.agent.get(url).expect(200)).body).spec;
    expect(after).toMatchObject({ name: spec.name, lockVersion: 1 });
    expect(after.versions).toHaveLength(1);
  });

  it('an unshared spec of someone else answers 404 to change, not 403', async () => {
    const ines = await as('demo-builder');
    const spec = await makeSpec(ines);
    const tomasz = await as('demo-builder-2');
    expect((await tomasz.agent.patch(`/api/specs/${spec.id}`).set('x-csrf-token', tomasz.token).send({ name: 'Guessing ids', lockVersion: 1 })).status).toBe(404);
    expect((await tomasz.agent.post(`/api/specs/${spec.id}/versions`).set('x-csrf-token', tomasz.token).send(versionBody())).status).toBe(404);
  });

  it('q searches name and applies-to, case-insensitively; mine=1 leaves others’ shared specs out; % is only a character', async () => {
    const ines = await as('demo-builder');
    const tomasz = await as('demo-builder-2');
    const token = `Zq${Math.floor(Math.random() * 1e9)}`;
    const byName = await makeSpec(ines, { name: `Crank end float ${token}` });
    const byAppliesTo = await makeSpec(tomasz, { appliesTo: `Test marine twin ${token.toUpperCase()}`, shared: true, unit: 'mm', min: '0.05', max: '0.15', preferredMin: null, preferredMax: null, reject: null });
    const hidden = await makeSpec(tomasz, { name: `Unshared ${token}` });
    const percent = await makeSpec(ines, { name: `Ring gap 100% ${token}` });

    const found = await listAll(ines, `&q=${token.toLowerCase()}`);
    expect(found.map((s) => s.id)).toEqual([byName.id, byAppliesTo.id, percent.id]);
    expect(found.map((s) => s.id)).not.toContain(hidden.id);
    expect(found[1]!.latest).toMatchObject({ unit: 'mm', min: '0.05', max: '0.15' });

    const mine = await listAll(ines, `&q=${token}&mine=1`);
    expect(mine.map((s) => s.id)).toEqual([byName.id, percent.id]);

    const literal = await listAll(ines, `&q=${encodeURIComponent(`100% ${token}`)}`);
    expect(literal.map((s) => s.id)).toEqual([percent.id]);
    expect(await listAll(ines, `&q=${encodeURIComponent(`%${token}`)}`)).toEqual([]);
  });

  it('pages by keyset on id', async () => {
    const ines = await as('demo-builder');
    const a = await makeSpec(ines);
    const b = await makeSpec(ines);
    const page = specListResponseSchema.parse((await ines.agent.get(`/api/specs?limit=1&after=${a.id - 1}&mine=1`).expect(200)).body);
    expect(page.items.map((s) => s.id)).toEqual([a.id]);
    expect(page.nextAfter).toBe(a.id);
    const next = specListResponseSchema.parse((await ines.agent.get(`/api/specs?limit=1&after=${page.nextAfter}&mine=1`).expect(200)).body);
    expect(next.items.map((s) => s.id)).toEqual([b.id]);
  });
});

describe('editing a spec', () => {
  it('name, applies-to and shared change with the lock; the second of two tabs gets 409 edit_conflict and nothing of it is stored', async () => {
    const ines = await as('demo-builder');
    const spec = await makeSpec(ines);
    const url = `/api/specs/${spec.id}`;
    const first = await ines.agent.patch(url).set('x-csrf-token', ines.token).send({ shared: true, lockVersion: 1 }).expect(200);
    expect(specResponseSchema.parse(first.body).spec).toMatchObject({ shared: true, name: spec.name, lockVersion: 2 });
    const second = await ines.agent.patch(url).set('x-csrf-token', ines.token).send({ name: 'From the second tab', shared: false, lockVersion: 1 });
    expect(second.status).toBe(409);
    expect(errorBodySchema.parse(second.body).error.code).toBe('edit_conflict');
    const stored = specResponseSchema.parse((await ines.agent.get(url).expect(200)).body).spec;
    expect(stored).toMatchObject({ name: spec.name, shared: true, lockVersion: 2 });
  });

  it('figures cannot be changed by a PATCH: they change only by a new version', async () => {
    const ines = await as('demo-builder');
    const spec = await makeSpec(ines);
    const res = await ines.agent.patch(`/api/specs/${spec.id}`).set('x-csrf-token', ines.token).send({ max: '0.0100', lockVersion: 1 });
    expect(res.status).toBe(400);
    expect(errorBodySchema.parse(res.body).error.message).toContain('max');
    const stored = specResponseSchema.parse((await ines.agent.get(`/api/specs/${spec.id}`).expect(200)).body).spec;
    expect(stored.latest.max).toBe('0.0040');
  });
});

describe('spec versions', () => {
  it('are numbered 1, 2, 3; earlier versions stay exactly as they were; newest first', async () => {
    const ines = await as('demo-builder');
    const spec = await makeSpec(ines);
    const url = `/api/specs/${spec.id}/versions`;
    const v2 = specVersionResponseSchema.parse(
      (await ines.agent.post(url).set('x-csrf-token', ines.token).send({ unit: 'in', min: '0.0015', max: '0.0040', source: { kind: 'manual', text: 'Test manual (invented), 2nd edition' } }).expect(201)).body,
    ).version;
    expect(v2).toMatchObject({ version: 2, min: '0.0015', preferredMin: null, reject: null });
    const v3 = specVersionResponseSchema.parse(
      (await ines.agent.post(url).set('x-csrf-token', ines.token).send({ unit: 'mm', min: '0.04', max: '0.10', rule: 'simple', source: { kind: 'standard', text: 'Test standard (invented)' }, note: 'metric figures' }).expect(201)).body,
    ).version;
    expect(v3).toMatchObject({ version: 3, unit: 'mm', rule: 'simple', note: 'metric figures' });

    const got = specResponseSchema.parse((await ines.agent.get(`/api/specs/${spec.id}`).expect(200)).body).spec;
    expect(got.versions?.map((v) => v.version)).toEqual([3, 2, 1]);
    expect(got.latest).toEqual(v3);
    expect(got.versions?.[2]).toEqual(spec.latest);
    expect(got.lockVersion).toBe(1);
  });

  it('a new version is checked like a new spec, naming the field', async () => {
    const ines = await as('demo-builder');
    const spec = await makeSpec(ines);
    const url = `/api/specs/${spec.id}/versions`;
    expect(fields(await ines.agent.post(url).set('x-csrf-token', ines.token).send({ unit: 'in', min: '0.0020', max: '0.0040', reject: '0.0030', source: { kind: 'manual', text: 'Test manual' } }))).toEqual(['reject']);
    expect(fields(await ines.agent.post(url).set('x-csrf-token', ines.token).send({ unit: 'in', min: '0.0020', max: '0.0040' }))).toEqual(['source']);
  });

  it('two versions posted at once get different numbers', async () => {
    const ines = await as('demo-builder');
    const spec = await makeSpec(ines);
    const url = `/api/specs/${spec.id}/versions`;
    const body = (max: string) => ({ unit: 'in', min: '0.0020', max, source: { kind: 'manual', text: 'Test manual (invented)' } });
    const results = await Promise.all(['0.0041', '0.0042', '0.0043'].map((max) => ines.agent.post(url).set('x-csrf-token', ines.token).send(body(max))));
    expect(results.map((r) => r.status)).toEqual([201, 201, 201]);
    const numbers = results.map((r) => specVersionResponseSchema.parse(r.body).version.version).sort();
    expect(numbers).toEqual([2, 3, 4]);
    expect((await latestVersionNumbers([spec.id])).get(spec.id)).toBe(4);
  });

  it('there is no route that edits or deletes a version', async () => {
    const ines = await as('demo-builder');
    const spec = await makeSpec(ines);
    const v = spec.latest;
    expect((await ines.agent.patch(`/api/specs/${spec.id}/versions/${v.id}`).set('x-csrf-token', ines.token).send({ max: '0.0100' })).status).toBe(404);
    expect((await ines.agent.delete(`/api/specs/${spec.id}/versions/${v.id}`).set('x-csrf-token', ines.token)).status).toBe(404);
  });
});

describe('specVersionUsableBy', () => {
  it('gives a version of one’s own or a shared spec; refuses others’ unshared ones naming specVersionId; reviewers use any', async () => {
    const ines = await as('demo-builder');
    const own = await makeSpec(ines);
    const shared = await makeSpec(ines, { shared: true });
    const [inesUser, tomaszUser, moderatorUser] = await Promise.all(
      ['demo-builder', 'demo-builder-2', 'demo-moderator'].map(async (login) => (await User.findOne({ where: { login } }))!),
    );
    expect(toSpecVersionDto(await specVersionUsableBy(own.latest.id, inesUser!))).toEqual(own.latest);
    expect((await specVersionUsableBy(shared.latest.id, tomaszUser!)).id).toBe(shared.latest.id);
    expect((await specVersionUsableBy(own.latest.id, moderatorUser!)).id).toBe(own.latest.id);

    for (const id of [own.latest.id, 2_000_000_000]) {
      const refusal = await specVersionUsableBy(id, tomaszUser!).then(
        () => null,
        (err: unknown) => err,
      );
      expect(refusal).toBeInstanceOf(AppError);
      expect(refusal).toMatchObject({ status: 400, details: [{ path: 'specVersionId', message: 'no spec version you can use has that id' }] });
    }
  });

  it('latestVersionNumbers answers for many specs at once', async () => {
    const ines = await as('demo-builder');
    const a = await makeSpec(ines);
    const b = await makeSpec(ines);
    await ines.agent.post(`/api/specs/${b.id}/versions`).set('x-csrf-token', ines.token).send({ unit: 'in', max: '0.005', source: { kind: 'manual', text: 'Test manual' } }).expect(201);
    const numbers = await latestVersionNumbers([a.id, b.id]);
    expect([numbers.get(a.id), numbers.get(b.id)]).toEqual([1, 2]);
    expect((await latestVersionNumbers([])).size).toBe(0);
  });
});
