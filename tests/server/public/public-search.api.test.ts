import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { QueryTypes } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { publicStoryListResponseSchema, type PublicStoryListResponse } from '@shared/public/public-story.schema';
import { SNIPPET_MARK_END, SNIPPET_MARK_START, snippetParts } from '@shared/public/search-snippet';
import { User } from '../../../server/features/users/user.model';
import { makeTestClip } from '../../support/clips';
import { sessionFor, type Session } from '../../support/matrix-fixtures';
import { fixtureBody, lockVersionOf, makeReviewFixture, move, publishThroughReview, sessionWithRole, type ReviewFixture } from '../../support/review-fixtures';
import { startTestApp, type TestApp } from '../../support/test-app';

/*
 * Search on the public list (`?q=`): full text over everything a published revision says (title,
 * summary, claims, reading and clearance names, parts and serials, tags, text, builder), ranked,
 * with a marked snippet; titles and summaries by substring and similar titles when no story has
 * the words. Other test files publish the same fixture story (its end float of 0.0047 in), so
 * those searches check membership; the other words and serials are invented for this file.
 */

let t: TestApp;
let work: string;
let anonymous: Session;
let builder: Session & { userId: number };
/** Published: words in its title, summary, text and parts. */
let pump: ReviewFixture;
/** Published: BODY_WORD in its title. */
let titled: ReviewFixture;
/** Never published. */
let draft: ReviewFixture;
/** Published, then withdrawn. */
let withdrawn: ReviewFixture;

const TITLE = 'Search test: the Quillback pump';
const SUMMARY = 'Lapped on the Marrowfat plate until 100% flat; rotor-gap noted, back\\face clean.';
const BODY_WORD = 'Brindlewick';
const PART = { name: 'Gorsefield quench valve (invented)', serial: 'VP-0417' };
const BUILDER_NAME = 'Orrin Tamsworth (invented)';

const send = (s: Session, verb: 'patch', url: string, body: object) => s.agent[verb](url).set('x-csrf-token', s.token).send(body);

beforeAll(async () => {
  work = fs.mkdtempSync(path.join(os.tmpdir(), 'benchproof-search-'));
  const clipFile = await makeTestClip({ seconds: 2, format: 'mp4-h264', dir: work });
  t = await startTestApp({}, { jobs: true });
  const moderator = await sessionFor(t, 'moderator');
  anonymous = await sessionFor(t, 'anonymous');
  builder = await sessionWithRole(t, 'builder', 'search-builder');

  pump = await makeReviewFixture(builder, { clipFile, title: TITLE, body: fixtureBody({ extra: `Afterwards the ${BODY_WORD} jig went back in its drawer.` }) });
  await send(builder, 'patch', `/api/stories/${pump.story.id}`, { summary: SUMMARY, lockVersion: await lockVersionOf(builder, pump.story.id) }).expect(200);
  await send(builder, 'patch', `/api/builds/${pump.buildId}`, { parts: [{ id: pump.partId, name: 'Oil pump (invented)', serial: 'TP-0417' }, PART] }).expect(200);
  expect(await publishThroughReview(builder, moderator, pump)).toBe(1);

  titled = await makeReviewFixture(builder, { clipFile, title: `Search test: ${BODY_WORD} jig` });
  expect(await publishThroughReview(builder, moderator, titled)).toBe(1);

  draft = await makeReviewFixture(builder, { clipFile, title: 'Search test: the Thimbleroot draft', body: fixtureBody({ extra: `The ${BODY_WORD} jig again.` }) });

  withdrawn = await makeReviewFixture(builder, { clipFile, title: 'Search test: the Cobbleward withdrawal', body: fixtureBody({ extra: `The ${BODY_WORD} jig once more.` }) });
  expect(await publishThroughReview(builder, moderator, withdrawn)).toBe(1);
}, 600_000);

afterAll(async () => {
  await t?.close();
  if (work) fs.rmSync(work, { recursive: true, force: true });
});

async function search(query: Record<string, string | number>): Promise<PublicStoryListResponse> {
  const res = await anonymous.agent.get('/api/public/stories').query({ limit: 50, ...query }).expect(200);
  return publicStoryListResponseSchema.parse(res.body);
}
const found = async (q: string) => (await search({ q })).items.map((i) => i.storyId);

describe('public full-text search', () => {
  it('finds a published story by the phrase “end float”, by a figure and by a serial of one of its parts', async () => {
    const id = pump.story.id;
    expect(await found('end float')).toContain(id);
    expect(await found('"end float"')).toContain(id);
    expect(await found('0.0047')).toContain(id);
    expect(await found('VP-0417')).toEqual([id]);
    expect(await found('vp-0417')).toEqual([id]);
    // The number of the serial alone (other fixtures' parts are TP-0417), and with a typographic dash.
    expect(await found('0417')).toContain(id);
    expect(await found('VP–0417')).toEqual([id]);
    // Another serial with the same number is another serial.
    expect(await found('VX-0417')).not.toContain(id);
  });

  it('finds it by a word only in its text, by a part name and by its builder’s name', async () => {
    const id = pump.story.id;
    expect(await found(BODY_WORD)).toContain(id);
    expect(await found('gorsefield quench valve')).toEqual([id]);
    await User.update({ displayName: BUILDER_NAME }, { where: { id: builder.userId } });
    const byName = await found('Tamsworth');
    expect(byName).toContain(pump.story.id);
    expect(byName).toContain(titled.story.id);
    expect(byName).not.toContain(draft.story.id);
  });

  it('never finds a draft, and stops finding a story once it is withdrawn', async () => {
    expect(await found('Thimbleroot')).toEqual([]);
    expect(await found(BODY_WORD)).not.toContain(draft.story.id);
    expect(await found('Cobbleward')).toEqual([withdrawn.story.id]);
    expect((await move(builder, withdrawn.story.id, 'withdraw', { reason: 'a reading needs redoing' })).status).toBe(200);
    expect(await found('Cobbleward')).toEqual([]);
    expect(await found(BODY_WORD)).not.toContain(withdrawn.story.id);
  });

  it('ranks a title match above a match in the text only, and pages by rank without repeats', async () => {
    const all = await search({ q: BODY_WORD });
    expect(all.searchMatch).toBe('words');
    const ids = all.items.map((i) => i.storyId);
    expect(ids.indexOf(titled.story.id)).toBeGreaterThanOrEqual(0);
    expect(ids.indexOf(titled.story.id)).toBeLessThan(ids.indexOf(pump.story.id));
    const [first, second] = all.items;
    expect(first!.rank).toBeGreaterThan(second!.rank!);

    const walked: number[] = [];
    let before: string | null = null;
    do {
      const page: PublicStoryListResponse = await search({ q: BODY_WORD, limit: 1, ...(before && { before }) });
      walked.push(...page.items.map((i) => i.storyId));
      before = page.nextBefore;
    } while (before && walked.length < 20);
    expect(walked).toEqual(ids);
  });

  it('returns a snippet with the matched words between the marks, as text', async () => {
    const { items } = await search({ q: BODY_WORD });
    const item = items.find((i) => i.storyId === pump.story.id)!;
    expect(item.snippet).toContain(`${SNIPPET_MARK_START}${BODY_WORD}${SNIPPET_MARK_END}`);
    expect(snippetParts(item.snippet!).filter((p) => p.marked).map((p) => p.text)).toEqual([BODY_WORD]);
    // Claim links read as their words, without their targets.
    const phrase = (await search({ q: '"end float"', builder: (await User.findByPk(builder.userId))!.login })).items.find((i) => i.storyId === pump.story.id)!;
    expect(snippetParts(phrase.snippet!).some((p) => p.marked && /end float/i.test(p.text))).toBe(true);
    expect(phrase.snippet).not.toContain('(clearance:');
    // Without q, nothing is searched.
    const plain = await search({});
    expect(plain.searchMatch).toBeNull();
    expect(plain.items.every((i) => i.snippet === null && i.rank === null)).toBe(true);
  });

  it('answers 400 to a cursor that is not one of this list’s', async () => {
    for (const query of [
      { q: BODY_WORD, before: 'not-a-cursor' },
      { q: BODY_WORD, before: '2026-03-01T09:30:00.000Z_5' },
      { q: BODY_WORD, before: 'w_0.1_99999999999' },
      { q: BODY_WORD, before: 'w_NaN_5' },
      { before: 'w_0.1_5' },
    ]) {
      const res = await anonymous.agent.get('/api/public/stories').query(query).expect(400);
      expect(res.body.error).toMatchObject({ code: 'invalid_request', details: [{ path: 'before', message: 'before must be a cursor from a previous page' }] });
    }
  });
});

describe('when no story has the words', () => {
  it('finds a story by part of a word or a misspelt title, as a similar match without a snippet', async () => {
    const id = pump.story.id;
    const partial = await search({ q: 'rrowfa' });
    expect(partial.items.map((i) => i.storyId)).toEqual([id]);
    expect(partial.searchMatch).toBe('similar');
    expect(partial.items[0]!.snippet).toBeNull();
    expect(await found('Quilback')).toContain(id);
  });

  it('finds a story by a word of its title or of its summary, in any case', async () => {
    const id = pump.story.id;
    expect(await found('Quillback')).toEqual([id]);
    expect(await found('QUILLBACK')).toEqual([id]);
    expect(await found('quillBack pump')).toEqual([id]);
    expect(await found('Marrowfat')).toEqual([id]);
    expect(await found('marrowfat plate')).toEqual([id]);
    // The list item is the publication as written.
    const [item] = (await search({ q: 'marrowfat' })).items;
    expect(item).toMatchObject({ storyId: id, title: `${TITLE}: end float`, summary: SUMMARY });
  });

  it('takes %, _ and \\ literally in a substring', async () => {
    const id = pump.story.id;
    // As wildcards these would match "Marrowfat plate" and "Marrowfat".
    expect(await found('Marrow%plate')).toEqual([]);
    expect(await found('M_rrowfat')).toEqual([]);
    // The characters themselves are found where they are written.
    expect(await found('100% flat')).toEqual([id]);
    expect(await found('%')).toContain(id);
    expect(await found('rotor-gap')).toEqual([id]);
    expect(await found('back\\face')).toContain(id);
    expect(await found('backface')).toEqual([]);
  });
});

describe('the search indexes', () => {
  it('keeps the trigram indexes and has a GIN index on the search document', async () => {
    const indexes = await t.sequelize.query<{ tablename: string; indexname: string; indexdef: string }>(
      `SELECT tablename, indexname, indexdef FROM pg_indexes
        WHERE schemaname = current_schema() AND (indexdef LIKE '%gin_trgm_ops%' OR tablename = 'story_search') ORDER BY indexname`,
      { type: QueryTypes.SELECT },
    );
    expect(indexes.map((i) => i.indexname)).toEqual(['story_publications_summary_trgm', 'story_publications_title_trgm', 'story_search_document_gin', 'story_search_pkey']);
    expect(indexes[2]!.indexdef).toContain('USING gin (document)');
  });

  it('answers a search from the GIN index, and a substring from the trigram indexes', async () => {
    // The test table is small, so the planner would read it whole; with sequential scans off it
    // shows whether the indexes fit the predicates at all (the bench shows when it chooses them).
    const plan = (text: string, replacements: Record<string, unknown>) =>
      t.sequelize.transaction(async (transaction) => {
        await t.sequelize.query('SET LOCAL enable_seqscan = off', { transaction });
        const rows = await t.sequelize.query<{ 'QUERY PLAN': string }>(`EXPLAIN ${text}`, { type: QueryTypes.SELECT, replacements, transaction });
        return rows.map((r) => r['QUERY PLAN']).join('\n');
      });
    expect(await plan(`SELECT publication_id FROM story_search WHERE document @@ benchproof_search_query(:q)`, { q: 'end float' })).toContain(
      'Bitmap Index Scan on story_search_document_gin',
    );
    const trigram = await plan(`SELECT p.id FROM story_publications p WHERE (p.title ILIKE :like OR p.summary ILIKE :like OR :q <% p.title)`, {
      like: '%quillback%',
      q: 'quillback',
    });
    expect(trigram).toContain('Bitmap Index Scan on story_publications_title_trgm');
    expect(trigram).toContain('Bitmap Index Scan on story_publications_summary_trgm');
  });
});
