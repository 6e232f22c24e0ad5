import { clearanceResponseSchema, type Clearance as ClearanceDto } from '@shared/clearances/clearance.schema';
import { readingResponseSchema, type Reading as ReadingDto } from '@shared/readings/reading.schema';
import { storyResponseSchema, type Story as StoryDto } from '@shared/stories/story.schema';
import { uploadClip, waitUntilReady, type Session } from './matrix-fixtures';
import { freshAccount, signIn, csrfToken, type TestApp } from './test-app';
import { User } from '../../server/features/users/user.model';

/*
 * Review fixtures: everything a story needs before a moderator can check it, made through the
 * API as its builder would make it. The figures are invented (an invented flat-twin oil pump);
 * they are the end-float figures of tests/shared/measure/calc.test.ts, so the clearance works
 * out to 0.5642 in − 0.5595 in = 0.0047 in, within a 0.003–0.005 in band by the guarded rule.
 */

/** What `makeReviewFixture` made, with the API's own shapes. */
export interface ReviewFixture {
  buildId: number;
  partId: number;
  clipId: number;
  /** Two moments on the clip: the depth reading is at the first, the height at the second. */
  momentIds: [number, number];
  instruments: { depth: number; mic: number };
  readings: { depth: ReadingDto; height: ReadingDto };
  clearance: ClearanceDto;
  spec: { specId: number; versionId: number };
  story: StoryDto;
  /** With `quantities: true`: readings and results of other quantities than a length (`makeQuantityEvidence`). */
  quantities?: QuantityEvidence;
}

/**
 * Evidence of other quantities on the fixture's build (figures invented): a head bolt torqued to
 * 35 lbf·ft with a torque wrench, judged as a result against 30–40 lbf·ft; and a chamber of 60.2 cc
 * and a dish of 4.0 cc cc'd with a burette, in a static compression ratio
 * (swept + chamber + dish) / (chamber + dish) with a swept volume of 589.0 cc, = 653.2 / 64.2 ≈ 10.17,
 * against a ratio spec of 9.5–10.5 by the guarded rule.
 */
export interface QuantityEvidence {
  instruments: { torque: number; burette: number };
  readings: { torque: ReadingDto; chamber: ReadingDto; dish: ReadingDto };
  clearances: { torque: ClearanceDto; ratio: ClearanceDto };
  specs: { torque: { specId: number; versionId: number }; ratio: { specId: number; versionId: number } };
}

/** Keys of the quantity evidence's readings and results. */
export const quantityKeys = { torque: 'head-bolt-torque', torqueResult: 'head-bolt-torque-check', chamber: 'chamber-volume', dish: 'dish-volume', ratio: 'compression-ratio' } as const;

/**
 * Claims on the quantity evidence whose words agree with their figures: the torque reading as
 * typed, the torque result's verdict, and the compression ratio (10.2:1 means 10.15–10.25, which
 * overlaps 10.17 ± U).
 */
export function quantityClaims(opts: { torqueWords?: string; ratioWords?: string } = {}): string {
  return [
    `The head went on and each bolt was [${opts.torqueWords ?? 'torqued to 35 lbf·ft'}](reading:${quantityKeys.torque}) in three passes; [the torque is within spec](clearance:${quantityKeys.torqueResult}).`,
    '',
    `[${opts.ratioWords ?? 'The compression ratio works out to 10.2:1, within spec'}](clearance:${quantityKeys.ratio}) from the cc'd chamber and dish.`,
  ].join('\n');
}

/** Keys the fixture's claims use. */
export const fixtureKeys = { depth: 'bore-depth', height: 'rotor-height', clearance: 'end-float' } as const;

/**
 * The default story body: two claims whose words agree with their figures (a reading and the
 * clearance, so the height reading is cited through the clearance only), and a caution.
 */
export function fixtureBody(opts: { depthWords?: string; clearanceWords?: string; extra?: string } = {}): string {
  return [
    'The pump body went onto the surface plate, cleaned and dry, before anything was measured.',
    '',
    `[${opts.depthWords ?? 'The bore depth read 0.5642 in'}](reading:${fixtureKeys.depth}) with the depth micrometer, and the rotor height came next.`,
    '',
    `[${opts.clearanceWords ?? 'End float is 0.0047 in, within spec'}](clearance:${fixtureKeys.clearance}) by the guarded rule.`,
    ...(opts.extra ? ['', opts.extra] : []),
    '',
    ':::caution solvents',
    'The parts were washed in solvent first.',
    ':::',
    '',
  ].join('\n');
}

const send = (s: Session, verb: 'post' | 'patch' | 'delete', url: string, body?: object) => {
  const req = s.agent[verb](url).set('x-csrf-token', s.token);
  return body === undefined ? req : req.send(body);
};

async function created<T>(what: string, res: { status: number; body: unknown }, parse: (body: unknown) => T): Promise<T> {
  if (res.status !== 201) throw new Error(`fixture ${what} answered ${res.status}: ${JSON.stringify(res.body)}`);
  return parse(res.body);
}

/**
 * Makes, as `owner` (a builder's session): a build with one part, a processed clip (`clipFile`,
 * at least 2 s long) with two moments, a depth and an outside micrometer, a depth and a height
 * reading, a spec with a cited source, an end-float clearance against it, and a draft story with
 * two claims (`body`, default `fixtureBody()`). Needs a test app started with `jobs: true`.
 */
export async function makeReviewFixture(owner: Session, opts: { clipFile: string; title?: string; body?: string; quantities?: boolean }): Promise<ReviewFixture> {
  const title = opts.title ?? 'Invented flat-twin oil pump (review test)';
  const build = await created('build', await send(owner, 'post', '/api/builds', { title, subject: 'an invented engine, for tests', parts: [{ name: 'Oil pump (invented)', serial: 'TP-0417' }] }), (b) => (b as { build: { id: number; parts: { id: number }[] } }).build);
  const clipId = await uploadClip(owner, build.id, opts.clipFile);
  await waitUntilReady(owner, clipId);
  const moment = async (atMs: number, label: string) =>
    created('moment', await send(owner, 'post', `/api/clips/${clipId}/moments`, { atMs, label }), (b) => (b as { moment: { id: number } }).moment.id);
  const momentIds: [number, number] = [await moment(500, 'Depth micrometer on the pump body'), await moment(1500, 'Rotor under the micrometer')];

  const calibrated = { unit: 'in', resolution: '0.0001', lastCalibratedOn: '2026-01-05', calibrationIntervalDays: 3650 };
  const instrument = async (name: string, kind: string) =>
    created('instrument', await send(owner, 'post', '/api/instruments', { ...calibrated, name, kind, serial: 'INV-TEST' }), (b) => (b as { instrument: { id: number } }).instrument.id);
  const instruments = { depth: await instrument('Depth micrometer 0–6 in (test)', 'depth-micrometer'), mic: await instrument('Outside micrometer 0–1 in (test)', 'outside-micrometer') };

  const reading = async (body: Record<string, unknown>) =>
    created('reading', await send(owner, 'post', `/api/builds/${build.id}/readings`, { takenOn: '2026-11-20', kind: 'direct', partId: build.parts[0]!.id, ...body }), (b) => readingResponseSchema.parse(b).reading);
  const depth = await reading({ momentId: momentIds[0], instrumentId: instruments.depth, key: fixtureKeys.depth, name: 'Bore depth', value: '0.5642' });
  const height = await reading({ momentId: momentIds[1], instrumentId: instruments.mic, key: fixtureKeys.height, name: 'Rotor height', value: '0.5595' });

  const spec = await created(
    'spec',
    await send(owner, 'post', '/api/specs', {
      name: 'Pump end float (invented, test)',
      appliesTo: 'Invented flat-twin rotor oil pump',
      unit: 'in',
      min: '0.003',
      max: '0.005',
      rule: 'guarded',
      source: { kind: 'manual', text: 'Invented workshop manual, section 3 (test figures)' },
    }),
    (b) => (b as { spec: { id: number; latest: { id: number } } }).spec,
  );
  const clearance = await created(
    'clearance',
    await send(owner, 'post', `/api/builds/${build.id}/clearances`, {
      key: fixtureKeys.clearance,
      name: 'End float',
      template: 'end-float',
      terms: [
        { readingId: depth.id, sign: 1 },
        { readingId: height.id, sign: -1 },
      ],
      specVersionId: spec.latest.id,
    }),
    (b) => clearanceResponseSchema.parse(b).clearance,
  );
  const quantities = opts.quantities ? await makeQuantityEvidence(owner, { buildId: build.id, partId: build.parts[0]!.id, momentIds }) : undefined;
  const story = await created(
    'story',
    await send(owner, 'post', `/api/builds/${build.id}/stories`, {
      title: `${title}: end float`,
      summary: 'End float of the invented pump, as supplied.',
      body: opts.body ?? fixtureBody(quantities ? { extra: quantityClaims() } : {}),
    }),
    (b) => storyResponseSchema.parse(b).story,
  );
  return {
    buildId: build.id,
    partId: build.parts[0]!.id,
    clipId,
    momentIds,
    instruments,
    readings: { depth, height },
    clearance,
    spec: { specId: spec.id, versionId: spec.latest.id },
    story,
    ...(quantities && { quantities }),
  };
}

/**
 * Makes the `QuantityEvidence` on a build of `owner`'s, through the API: a torque wrench in lbf·ft
 * and a burette in cc, their readings on the part at the fixture's moments, a torque spec and a
 * ratio spec, the torque result (the reading alone, judged) and the compression-ratio formula.
 */
export async function makeQuantityEvidence(owner: Session, on: { buildId: number; partId: number; momentIds: [number, number] }): Promise<QuantityEvidence> {
  const instrument = async (body: Record<string, unknown>) =>
    created('instrument', await send(owner, 'post', '/api/instruments', { lastCalibratedOn: '2026-01-05', calibrationIntervalDays: 3650, serial: 'INV-TEST-Q', ...body }), (b) => (b as { instrument: { id: number } }).instrument.id);
  const instruments = {
    torque: await instrument({ name: 'Click torque wrench 20–100 lbf·ft (test)', kind: 'torque-wrench', unit: 'lbf_ft', resolution: '1', statedUncertainty: '0.5' }),
    burette: await instrument({ name: 'Burette 100 cc (test)', kind: 'burette', unit: 'cc', resolution: '0.1', statedUncertainty: '0.2' }),
  };
  const reading = async (body: Record<string, unknown>) =>
    created('reading', await send(owner, 'post', `/api/builds/${on.buildId}/readings`, { takenOn: '2026-11-20', kind: 'direct', partId: on.partId, ...body }), (b) => readingResponseSchema.parse(b).reading);
  const readings = {
    torque: await reading({ momentId: on.momentIds[0], instrumentId: instruments.torque, key: quantityKeys.torque, name: 'Head bolt torque', unit: 'lbf_ft', value: '35' }),
    chamber: await reading({ momentId: on.momentIds[1], instrumentId: instruments.burette, key: quantityKeys.chamber, name: 'Chamber volume', unit: 'cc', value: '60.2' }),
    dish: await reading({ momentId: on.momentIds[1], instrumentId: instruments.burette, key: quantityKeys.dish, name: 'Dish volume', unit: 'cc', value: '4.0' }),
  };
  const spec = async (body: Record<string, unknown>) =>
    created('spec', await send(owner, 'post', '/api/specs', { rule: 'guarded', ...body }), (b) => {
      const s = (b as { spec: { id: number; latest: { id: number } } }).spec;
      return { specId: s.id, versionId: s.latest.id };
    });
  const specs = {
    torque: await spec({ name: 'Head bolt torque (invented, test)', appliesTo: 'Invented flat-twin head', unit: 'lbf_ft', min: '30', max: '40', source: { kind: 'manual', text: 'Invented workshop manual, section 5 (test figures)' } }),
    ratio: await spec({ name: 'Static compression ratio (invented, test)', appliesTo: 'Invented flat-twin', unit: '1', min: '9.5', max: '10.5', source: { kind: 'manual', text: 'Invented workshop manual, section 1 (test figures)' } }),
  };
  const clearance = async (body: Record<string, unknown>) =>
    created('clearance', await send(owner, 'post', `/api/builds/${on.buildId}/clearances`, body), (b) => clearanceResponseSchema.parse(b).clearance);
  const clearances = {
    torque: await clearance({ key: quantityKeys.torqueResult, name: 'Head bolt torque against the manual', template: 'custom', terms: [{ readingId: readings.torque.id, sign: 1 }], specVersionId: specs.torque.versionId }),
    ratio: await clearance({
      key: quantityKeys.ratio,
      name: 'Static compression ratio',
      template: null,
      formula: '(swept + chamber + dish) / (chamber + dish)',
      constants: { swept: { value: '589.0', unit: 'cc' } },
      terms: [
        { readingId: readings.chamber.id, symbol: 'chamber' },
        { readingId: readings.dish.id, symbol: 'dish' },
      ],
      specVersionId: specs.ratio.versionId,
    }),
  };
  return { instruments, readings, clearances, specs };
}

/**
 * A session for a new account given `role` (set on the row, as an admin would): for a second
 * moderator, or a moderator who also builds, without changing the shared demo accounts.
 */
export async function sessionWithRole(t: TestApp, role: 'builder' | 'moderator' | 'follower', prefix: string = role): Promise<Session & { userId: number; email: string }> {
  const account = freshAccount(t, prefix);
  const agent = await signIn(t, account.login);
  const id = (await agent.get('/api/me').expect(200)).body.user.id as number;
  await User.update({ role }, { where: { id } });
  return { agent, token: await csrfToken(agent), userId: id, email: account.email ?? `${account.login}@test.example` };
}

/** The story's lock version now (what an editor or the review sheet would send). */
export async function lockVersionOf(s: Session, storyId: number): Promise<number> {
  const res = await s.agent.get(`/api/stories/${storyId}`);
  if (res.status !== 200) throw new Error(`GET /api/stories/${storyId} answered ${res.status}`);
  return storyResponseSchema.parse(res.body).story.lockVersion;
}

/** POST /api/stories/:storyId/transitions with the story's current lock version (unless given). */
export async function move(s: Session, storyId: number, action: string, opts: { reason?: string; lockVersion?: number; as?: Session } = {}) {
  const lockVersion = opts.lockVersion ?? (await lockVersionOf(opts.as ?? s, storyId));
  return send(s, 'post', `/api/stories/${storyId}/transitions`, { action, lockVersion, ...(opts.reason !== undefined && { reason: opts.reason }) });
}

/** POST /api/review/checks for one subject of a story. */
export function checkSubject(moderator: Session, storyId: number, subjectType: 'reading' | 'clearance', subjectId: number, state: 'checked' | 'flagged' = 'checked', comment = '') {
  return send(moderator, 'post', '/api/review/checks', { storyId, subjectType, subjectId, state, ...(comment && { comment }) });
}

/** Claims the story and marks both readings and the clearance checked (and the quantity evidence, when made), as `moderator`. */
export async function claimAndCheckAll(moderator: Session, f: ReviewFixture, storyId = f.story.id): Promise<void> {
  const claim = await send(moderator, 'post', `/api/review/stories/${storyId}/claim`);
  if (claim.status !== 200) throw new Error(`claim answered ${claim.status}: ${JSON.stringify(claim.body)}`);
  const q = f.quantities;
  const extra = q
    ? ([
        ['reading', q.readings.torque.id],
        ['reading', q.readings.chamber.id],
        ['reading', q.readings.dish.id],
        ['clearance', q.clearances.torque.id],
        ['clearance', q.clearances.ratio.id],
      ] as const)
    : [];
  for (const [type, id] of [['reading', f.readings.depth.id], ['reading', f.readings.height.id], ['clearance', f.clearance.id], ...extra] as const) {
    const res = await checkSubject(moderator, storyId, type, id);
    if (res.status !== 201) throw new Error(`check of ${type} ${id} answered ${res.status}: ${JSON.stringify(res.body)}`);
  }
}

/** Submits as the builder, checks everything and publishes as `moderator`; resolves to the revision number. */
export async function publishThroughReview(owner: Session, moderator: Session, f: ReviewFixture, storyId = f.story.id): Promise<number> {
  const submitted = await move(owner, storyId, 'submit');
  if (submitted.status !== 200) throw new Error(`submit answered ${submitted.status}: ${JSON.stringify(submitted.body)}`);
  await claimAndCheckAll(moderator, f, storyId);
  const published = await move(moderator, storyId, 'publish');
  if (published.status !== 200) throw new Error(`publish answered ${published.status}: ${JSON.stringify(published.body)}`);
  return published.body.revision as number;
}
