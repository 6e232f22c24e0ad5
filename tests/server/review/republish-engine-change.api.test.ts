import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { ClearanceResult } from '@shared/clearances/clearance.schema';
import { formatUncertainty } from '@shared/measure/format';
import { reviewSheetSchema } from '@shared/review/review-sheet.schema';
import type { PublishedEvidence } from '../../../server/features/public/publication';
import { StoryPublication } from '../../../server/features/review/review.model';
import { Story } from '../../../server/features/stories/story.model';
import { makeTestClip } from '../../support/clips';
import { sessionFor, type Session } from '../../support/matrix-fixtures';
import { makeReviewFixture, move, publishThroughReview, type ReviewFixture } from '../../support/review-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

/*
 * A story published before the engine worked out a 95 % interval (it always took k = 2) comes
 * back for review: the moderator's sheet sets each cited clearance beside the same clearance as
 * the publication judged it, and says in words what moved.
 */

let t: TestApp;
let work: string;
let owner: Session;
let moderator: Session;
let f: ReviewFixture;

async function sheet(s: Session) {
  return reviewSheetSchema.parse((await s.agent.get(`/api/review/stories/${f.story.id}`).expect(200)).body);
}

/**
 * Rewrites the clearance's result in the story's current publication as the first engine would
 * have judged it. Publications are append-only (a trigger refuses UPDATE), so the trigger is
 * switched off inside one transaction: DDL is transactional in PostgreSQL, so no other session
 * ever sees it off. A stand-in for a publication made before the change, nothing more.
 */
/** Rewrites the published result as an older engine stored it (a stored JSON shape, so fields today's type requires may be missing). */
async function judgeAsTheFirstEngine(older: (r: ClearanceResult) => Omit<ClearanceResult, 'quantity'>): Promise<void> {
  const story = (await Story.findByPk(f.story.id))!;
  const sequelize = StoryPublication.sequelize!;
  await sequelize.transaction(async (transaction) => {
    const publication = (await StoryPublication.findByPk(story.publishedPublicationId!, { transaction }))!;
    const evidence = structuredClone(publication.evidence) as unknown as PublishedEvidence;
    evidence.clearances = evidence.clearances.map((c) => (c.id === f.clearance.id ? { ...c, result: older(c.result!) as ClearanceResult } : c));
    await sequelize.query('ALTER TABLE story_publications DISABLE TRIGGER story_publications_append_only', { transaction });
    await publication.update({ evidence: evidence as unknown as Record<string, unknown> }, { transaction });
    await sequelize.query('ALTER TABLE story_publications ENABLE TRIGGER story_publications_append_only', { transaction });
  });
}

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-republish-engine-'));
  const clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work });
  t = await startTestApp({}, { jobs: true });
  owner = await sessionFor(t, 'owner');
  moderator = await sessionFor(t, 'moderator');
  f = await makeReviewFixture(owner, { clipFile, title: 'Invented flat-twin oil pump (engine change test)' });
}, 180_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

describe('the review sheet of a published story sent for review again', () => {
  it('sets each cited clearance beside its published judgement and says nothing changed when the figures are the same', async () => {
    const before = await sheet(moderator);
    // Never published: nothing to compare with.
    expect(before.clearances[0]).toMatchObject({ asPublished: null, change: null });

    expect(await publishThroughReview(owner, moderator, f)).toBe(1);
    expect((await move(owner, f.story.id, 'submit')).status).toBe(200);
    const s = await sheet(moderator);
    const [entry] = s.clearances;
    const now = entry!.clearance.result!;
    // The micrometers' resolution (rectangular) carries most of the variance: a Monte Carlo run.
    expect(now.method).toBe('monte-carlo');
    expect(entry!.asPublished).toEqual({
      revision: 1,
      verdict: now.verdict,
      display: now.display,
      valueUm: now.valueUm,
      expandedUncertaintyUm: now.expandedUncertaintyUm,
      method: 'monte-carlo',
      quantity: 'length',
      unit: now.unit,
      value: now.value,
      expandedUncertainty: now.expandedUncertainty,
    });
    expect(entry!.change).toBeNull();
  }, 120_000);

  it('names the verdict and the U that moved when the publication was judged at k = 2 by the first engine', async () => {
    const now = (await sheet(moderator)).clearances[0]!.clearance.result!;
    // 0.5642 in − 0.5595 in = 0.0047 in = 119.38 µm, within 0.003–0.005 in by the guarded rule
    // now. The first engine's figure is invented: U = 8.0 µm at k = 2 reaches past 127 µm
    // (0.005 in), so it was too close to call then.
    const uThen = 8;
    await judgeAsTheFirstEngine((r) => {
      // The first engine knew neither the interval and budget nor figures in the result's own unit.
      const { method: _m, coverageProbability: _p, fixedCoverageFactor: _f, effectiveDegreesOfFreedom: _n, intervalUm: _i, probabilityOfConformance: _c, budget: _b, warnings: _w, quantity: _q, value: _v, standardUncertainty: _s, expandedUncertainty: _e, interval: _in, bandInUnit: _bi, ...first } = r;
      return { ...first, coverageFactor: 2, standardUncertaintyUm: uThen / 2, expandedUncertaintyUm: uThen, display: '0.0047 in ± 0.00031 in (k = 2)', verdict: 'undecided' };
    });

    const [entry] = (await sheet(moderator)).clearances;
    expect(now.verdict).toBe('conforms');
    expect(entry!.clearance.result).toEqual(now);
    expect(entry!.asPublished).toEqual({
      revision: 1,
      verdict: 'undecided',
      display: '0.0047 in ± 0.00031 in (k = 2)',
      valueUm: now.valueUm,
      expandedUncertaintyUm: uThen,
      method: null,
      // Read from its µm figures: 1 in = 25 400 µm (NIST SP 811 B.8).
      quantity: 'length',
      unit: 'in',
      value: now.valueUm! / 25_400,
      expandedUncertainty: uThen / 25_400,
    });
    const uNow = formatUncertainty(now.expandedUncertaintyUm!, 'in');
    expect(uNow).not.toBe('0.00031 in');
    expect(entry!.change).toBe(
      `within spec now; too close to call when published (revision 1). U is ${uNow} now, 0.00031 in when published: the engine now works out a 95 % interval instead of k = 2`,
    );
  }, 60_000);
});
