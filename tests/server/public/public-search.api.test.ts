import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { publicStoryListResponseSchema } from '@shared/public/public-story.schema';
import { makeTestClip } from '../../support/clips';
import { sessionFor, type Session } from '../../support/matrix-fixtures';
import { lockVersionOf, makeReviewFixture, publishThroughReview, type ReviewFixture } from '../../support/review-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

/*
 * Word search on the public list (`?q=`): a case-insensitive substring of the title or the
 * summary, with % and _ taken literally, answered with the trigram indexes of migration
 * 2026-12-02T04-00-00-search-trigram. The words are invented and appear in no other fixture.
 */

let t: TestApp;
let work: string;
let anonymous: Session;
let story: ReviewFixture;

const TITLE = 'Search test: the Quillback pump';
const SUMMARY = 'Lapped on the Marrowfat plate until 100% flat; rotor-gap noted, back\\face clean.';

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-search-'));
  const clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work });
  t = await startTestApp({}, { jobs: true });
  const [owner, moderator] = await Promise.all([sessionFor(t, 'owner'), sessionFor(t, 'moderator')]);
  anonymous = await sessionFor(t, 'anonymous');
  story = await makeReviewFixture(owner, { clipFile, title: TITLE });
  await owner.agent
    .patch(`/api/stories/${story.story.id}`)
    .set('x-csrf-token', owner.token)
    .send({ summary: SUMMARY, lockVersion: await lockVersionOf(owner, story.story.id) })
    .expect(200);
  expect(await publishThroughReview(owner, moderator, story)).toBe(1);
}, 300_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

async function found(q: string): Promise<number[]> {
  const res = await anonymous.agent.get('/api/public/stories').query({ q, limit: 50 }).expect(200);
  return publicStoryListResponseSchema.parse(res.body).items.map((i) => i.storyId);
}

describe('public word search', () => {
  it('finds a story by a word of its title or of its summary, in any case', async () => {
    const id = story.story.id;
    expect(await found('Quillback')).toEqual([id]);
    expect(await found('QUILLBACK')).toEqual([id]);
    expect(await found('quillBack pump')).toEqual([id]);
    expect(await found('Marrowfat')).toEqual([id]);
    expect(await found('marrowfat plate')).toEqual([id]);
    // A substring, not only whole words.
    expect(await found('rrowfa')).toEqual([id]);
    // The list item is the publication as written.
    const [item] = publicStoryListResponseSchema.parse((await anonymous.agent.get('/api/public/stories').query({ q: 'marrowfat' }).expect(200)).body).items;
    expect(item).toMatchObject({ storyId: id, title: `${TITLE}: end float`, summary: SUMMARY });
  });

  it('takes %, _ and \\ literally', async () => {
    const id = story.story.id;
    // As wildcards these would match "Quillback pump", "rotor-gap" and "Quillback".
    expect(await found('Quill%pump')).toEqual([]);
    expect(await found('rotor_gap')).toEqual([]);
    expect(await found('Quill_ack')).toEqual([]);
    // The characters themselves are found where they are written.
    expect(await found('100% flat')).toEqual([id]);
    expect(await found('%')).toContain(id);
    expect(await found('rotor-gap')).toEqual([id]);
    expect(await found('back\\face')).toEqual([id]);
    expect(await found('backface')).toEqual([]);
  });

  it('has the pg_trgm extension and a trigram index on the title and on the summary', async () => {
    const ext = await t.sequelize.query<{ extname: string }>(`SELECT extname FROM pg_extension WHERE extname = 'pg_trgm'`, { type: QueryTypes.SELECT });
    expect(ext).toEqual([{ extname: 'pg_trgm' }]);
    const indexes = await t.sequelize.query<{ indexname: string; indexdef: string }>(
      `SELECT indexname, indexdef FROM pg_indexes WHERE schemaname = current_schema() AND tablename = 'story_publications' AND indexdef LIKE '%gin_trgm_ops%' ORDER BY indexname`,
      { type: QueryTypes.SELECT },
    );
    expect(indexes.map((i) => i.indexname)).toEqual(['story_publications_summary_trgm', 'story_publications_title_trgm']);
    expect(indexes[0]!.indexdef).toContain('USING gin (summary gin_trgm_ops)');
    expect(indexes[1]!.indexdef).toContain('USING gin (title gin_trgm_ops)');
  });

  it('the indexes can answer the list’s filter as it is written (a BitmapOr of both)', async () => {
    // The test table is small, so the planner would read it whole; with sequential scans off it
    // shows whether the indexes fit the predicate at all (the bench shows when it chooses them).
    const plan = await t.sequelize.transaction(async (transaction) => {
      await t.sequelize.query('SET LOCAL enable_seqscan = off', { transaction });
      const rows = await t.sequelize.query<{ 'QUERY PLAN': string }>(`EXPLAIN SELECT p.id FROM story_publications p WHERE (p.title ILIKE :q OR p.summary ILIKE :q)`, {
        type: QueryTypes.SELECT,
        replacements: { q: '%quillback%' },
        transaction,
      });
      return rows.map((r) => r['QUERY PLAN']).join('\n');
    });
    expect(plan).toContain('BitmapOr');
    expect(plan).toContain('Bitmap Index Scan on story_publications_title_trgm');
    expect(plan).toContain('Bitmap Index Scan on story_publications_summary_trgm');
  });
});
