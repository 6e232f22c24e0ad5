import zlib from 'node:zlib';
import { QueryTypes } from 'sequelize';
import type { UnitSystem } from '@shared/measure/format';
import type { PublicBuild, PublicBuilderProfile, PublicClearanceFigure, PublicClearanceSummary } from '@shared/public/public-build.schema';
import type {
  PublicClaim,
  PublicStory,
  PublicStoryListItem,
  PublicStoryListQuery,
  PublicStoryListResponse,
} from '@shared/public/public-story.schema';
import { builderFeedPath } from '@shared/public/feed-paths';
import { readSearchCursor, searchCursorText, type SearchCursor } from '@shared/public/public-story.schema';
import { SNIPPET_MARK_END, SNIPPET_MARK_START } from '@shared/public/search-snippet';
import { STANDING_NOTE } from '@shared/stories/cautions';
import { claimTargetsFrom } from '@shared/stories/claims';
import { resultFigures } from '@shared/clearances/result-figures';
import { convertNumber, quantityOf } from '@shared/measure/quantities';
import { renderStory } from '@shared/stories/render';
import type { StoryTags } from '@shared/stories/story.schema';
import { notFound } from '../../http/errors';
import { Build, Part } from '../builds/build.model';
import { Clip, Moment } from '../clips/clip.model';
import { Follow } from '../follows/follow.model';
import { escapeLike } from '../readings/readings.service';
import { StoryPublication } from '../review/review.model';
import { Story } from '../stories/story.model';
import { User } from '../users/user.model';
import { mediaVersion, mediaVersions, versioned } from './media-versions';
import { LruCache } from './public.cache';
import {
  PUBLIC_STORY_SQL,
  builderRef,
  currentPublications,
  evidenceOf,
  publicClearance,
  publicClipUrls,
  publicReading,
  type PublishedEvidence,
} from './publication';

const sql = () => Story.sequelize!;

// ---------------------------------------------------------------------------------------------
// Lists

interface ListRow {
  story_id: number;
  publication_id: number;
  number: number;
  title: string;
  summary: string;
  tags: StoryTags;
  work_date: string | null;
  cover_moment_id: number | null;
  published_at: Date;
  cursor_at: string;
  claim_count: number;
  out_of_spec: boolean;
  build_id: number;
  build_title: string;
  builder_id: number;
  login: string;
  display_name: string;
  shop: string | null;
}

const OUT_OF_SPEC = JSON.stringify([{ result: { verdict: 'does-not-conform' } }]);

/** The columns of a list item, over `stories s`, `story_publications p`, `builds b`, `users u`. */
const LIST_COLUMNS = `s.id AS story_id, p.id AS publication_id, p.number, p.title, p.summary, p.tags,
            to_char(p.work_date, 'YYYY-MM-DD') AS work_date, p.cover_moment_id, p.published_at,
            to_char(p.published_at AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.US"Z"') AS cursor_at,
            jsonb_array_length(COALESCE(p.evidence->'claims', '[]'::jsonb)) AS claim_count,
            COALESCE((p.evidence->'clearances') @> CAST(:oos AS jsonb), false) AS out_of_spec,
            b.id AS build_id, b.title AS build_title, u.id AS builder_id, u.login, u.display_name, u.shop`;

const LIST_FROM = `stories s
       JOIN story_publications p ON p.id = s.published_publication_id
       JOIN builds b ON b.id = s.build_id
       JOIN users u ON u.id = b.owner_id`;

/**
 * Weights of ts_rank_cd, in its order {D, C, B, A}: the story's text, the builder, the summary and
 * what the claims name, the title (the weights the search_full_text migration gives each field).
 */
const SEARCH_WEIGHTS = '{0.05, 0.2, 0.4, 1.0}';
/**
 * ts_headline options: up to two passages of 8–24 words around the matches, the marks of
 * shared/public/search-snippet.ts. A passage is cut from the summary, the text and the names.
 */
const HEADLINE_OPTIONS = `StartSel=${SNIPPET_MARK_START}, StopSel=${SNIPPET_MARK_END}, MaxFragments=2, MaxWords=24, MinWords=8, FragmentDelimiter=" … "`;

/** The conditions every list shares (public now, and the filters other than `q`). */
function listFilters(q: PublicStoryListQuery, opts: { followerId?: number }) {
  const where = [PUBLIC_STORY_SQL];
  const replacements: Record<string, unknown> = { oos: OUT_OF_SPEC };
  if (q.tag) {
    // Containment per group, so the GIN index on tags can answer it.
    where.push('(p.tags @> CAST(:tagMachine AS jsonb) OR p.tags @> CAST(:tagComponent AS jsonb) OR p.tags @> CAST(:tagOperation AS jsonb))');
    replacements.tagMachine = JSON.stringify({ machine: [q.tag] });
    replacements.tagComponent = JSON.stringify({ component: [q.tag] });
    replacements.tagOperation = JSON.stringify({ operation: [q.tag] });
  }
  if (q.builder) {
    where.push('u.login = :builder');
    replacements.builder = q.builder;
  }
  if (q.verdict === 'out-of-spec') where.push(`(p.evidence->'clearances') @> CAST(:oos AS jsonb)`);
  if (opts.followerId !== undefined) {
    where.push('b.owner_id IN (SELECT f.builder_id FROM follows f WHERE f.follower_id = :followerId)');
    replacements.followerId = opts.followerId;
  }
  return { where, replacements };
}

/**
 * Published stories, newest publication first, by keyset on (publishedAt, publication id); with
 * `q`, best match first (`searchPublicStories`). `followerId` narrows to builders that account follows.
 */
export async function listPublicStories(q: PublicStoryListQuery, opts: { followerId?: number } = {}): Promise<PublicStoryListResponse> {
  if (q.q) return searchPublicStories(q as PublicStoryListQuery & { q: string }, opts);
  const { where, replacements } = listFilters(q, opts);
  replacements.limit = q.limit + 1;
  if (q.before) {
    const cut = q.before.lastIndexOf('_');
    where.push('(p.published_at, p.id) < (CAST(:beforeAt AS timestamptz), :beforeId)');
    replacements.beforeAt = q.before.slice(0, cut);
    replacements.beforeId = Number(q.before.slice(cut + 1));
  }
  const rows = await sql().query<ListRow>(
    `SELECT ${LIST_COLUMNS}
       FROM ${LIST_FROM}
      WHERE ${where.join(' AND ')}
      ORDER BY p.published_at DESC, p.id DESC
      LIMIT :limit`,
    { type: QueryTypes.SELECT, replacements },
  );
  const page = rows.slice(0, q.limit);
  const last = page[page.length - 1];
  return {
    items: await listItems(page, () => ({ snippet: null, rank: null })),
    nextBefore: rows.length > q.limit && last ? `${last.cursor_at}_${last.publication_id}` : null,
    searchMatch: null,
  };
}

/**
 * A searched list. Full text first: the story_search document of each public publication against
 * the reader's words (`benchproof_search_query`), ranked by ts_rank_cd with SEARCH_WEIGHTS, by
 * keyset on (rank, publication id), with a ts_headline snippet per item of the page. When no story
 * has the words, the titles and summaries that contain the text (ILIKE, % and _ taken literally)
 * and the titles like it (pg_trgm word similarity) are listed instead, most similar first; both
 * kinds of page use the trigram indexes. The cursor says which kind the next page continues.
 */
async function searchPublicStories(q: PublicStoryListQuery & { q: string }, opts: { followerId?: number }): Promise<PublicStoryListResponse> {
  const cursor = q.before ? readSearchCursor(q.before) : null;
  if (cursor?.match !== 'similar') {
    const words = await searchPage(q, opts, 'words', cursor);
    if (words.items.length > 0 || cursor) return words;
  }
  return searchPage(q, opts, 'similar', cursor);
}

async function searchPage(
  q: PublicStoryListQuery & { q: string },
  opts: { followerId?: number },
  match: 'words' | 'similar',
  cursor: SearchCursor | null,
): Promise<PublicStoryListResponse> {
  const { where, replacements } = listFilters(q, opts);
  Object.assign(replacements, { limit: q.limit + 1, q: q.q, like: `%${escapeLike(q.q)}%`, weights: SEARCH_WEIGHTS });
  const rankSql =
    match === 'words'
      ? `ts_rank_cd(CAST(:weights AS float4[]), d.document, (SELECT query FROM search))::float8`
      : `word_similarity(:q, p.title)::float8`;
  if (match === 'words') where.push('d.document @@ (SELECT query FROM search)');
  else where.push('(p.title ILIKE :like OR p.summary ILIKE :like OR :q <% p.title)');
  const after = cursor?.match === match ? 'WHERE (m.rank, m.publication_id) < (CAST(:afterRank AS float8), :afterId)' : '';
  if (after) Object.assign(replacements, { afterRank: String(cursor!.rank), afterId: cursor!.publicationId });
  // Only the tables the conditions need: a common word ranks every story that has it, and each
  // join is paid per match (at 10k matches the joins to builds and users cost more than the rank).
  const rankFrom = [
    match === 'words' ? 'story_search d JOIN stories s ON s.published_publication_id = d.publication_id' : 'stories s',
    ...(match === 'similar' || q.tag || q.verdict ? ['JOIN story_publications p ON p.id = s.published_publication_id'] : []),
    ...(q.builder || opts.followerId !== undefined ? ['JOIN builds b ON b.id = s.build_id', 'JOIN users u ON u.id = b.owner_id'] : []),
  ].join('\n           ');
  // The search query is worked out once (a materialised CTE read by scalar subqueries), and the
  // page is chosen over the narrow join before the list's columns and snippets are made for it.
  const rows = await sql().query<ListRow & { rank: number; snippet: string | null }>(
    `WITH search AS MATERIALIZED (SELECT benchproof_search_query(:q) AS query),
     matched AS (
       SELECT m.publication_id, m.rank FROM (
         SELECT s.published_publication_id AS publication_id, ${rankSql} AS rank
           FROM ${rankFrom}
          WHERE ${where.join(' AND ')}
       ) m
       ${after}
       ORDER BY m.rank DESC, m.publication_id DESC
       LIMIT :limit
     )
     SELECT ${LIST_COLUMNS}, matched.rank,
            ${match === 'words' ? `ts_headline('benchproof_search', d.snippet_source, (SELECT query FROM search), :headline)` : 'NULL'} AS snippet
       FROM matched
       JOIN story_publications p ON p.id = matched.publication_id
       JOIN stories s ON s.published_publication_id = p.id
       JOIN builds b ON b.id = s.build_id
       JOIN users u ON u.id = b.owner_id
       LEFT JOIN story_search d ON d.publication_id = p.id
      ORDER BY matched.rank DESC, matched.publication_id DESC`,
    { type: QueryTypes.SELECT, replacements: { ...replacements, headline: HEADLINE_OPTIONS } },
  );
  const page = rows.slice(0, q.limit);
  const last = page[page.length - 1];
  return {
    items: await listItems(page, (r) => ({ snippet: r.snippet, rank: Number(r.rank) })),
    nextBefore: rows.length > q.limit && last ? searchCursorText({ match, rank: Number(last.rank), publicationId: last.publication_id }) : null,
    searchMatch: match,
  };
}

async function listItems<R extends ListRow>(page: R[], search: (r: R) => { snippet: string | null; rank: number | null }): Promise<PublicStoryListItem[]> {
  const covers = await coverUrls(page.map((r) => r.cover_moment_id));
  return page.map((r) => ({
    storyId: r.story_id,
    revision: r.number,
    title: r.title,
    summary: r.summary,
    coverUrl: r.cover_moment_id === null ? null : (covers.get(r.cover_moment_id) ?? null),
    tags: r.tags,
    workDate: r.work_date,
    publishedAt: new Date(r.published_at).toISOString(),
    builder: { id: r.builder_id, login: r.login, displayName: r.display_name, shop: r.shop },
    build: { id: r.build_id, title: r.build_title },
    claimCount: Number(r.claim_count),
    outOfSpec: Boolean(r.out_of_spec),
    ...search(r),
  }));
}

/** Public evidence stills of cover moments, by moment id. */
export async function coverUrls(momentIds: (number | null)[]): Promise<Map<number, string>> {
  const ids = [...new Set(momentIds.filter((id): id is number => id !== null))];
  if (ids.length === 0) return new Map();
  // One query: the moments with their clips' storage prefixes, which name the media's version.
  const moments = await Moment.findAll({
    where: { id: ids },
    attributes: ['id', 'clipId', 'atMs'],
    include: [{ model: Clip, as: 'clip', attributes: ['id', 'storagePrefix'] }],
  });
  return new Map(
    moments.map((m) => {
      const clip = (m as Moment & { clip?: Clip }).clip;
      return [m.id, versioned(publicClipUrls(m.clipId, m.atMs).stillUrl, clip ? mediaVersion(clip) : undefined)];
    }),
  );
}

// ---------------------------------------------------------------------------------------------
// One story

/**
 * The current public publication of a story, or null when it has none or it is withdrawn. One
 * query: this is all a cached story costs.
 */
export async function currentPublicationOf(storyId: number): Promise<number | null> {
  const [row] = await sql().query<{ id: number }>(`SELECT s.published_publication_id AS id FROM stories s WHERE s.id = :storyId AND ${PUBLIC_STORY_SQL}`, {
    type: QueryTypes.SELECT,
    replacements: { storyId },
  });
  return row?.id ?? null;
}

/**
 * A public page: the publication it shows, and the version of what it shows besides the
 * publication's own figures (the build's title and parts, the builder's and the publisher's
 * names), so a rename reaches readers without a new publication.
 */
export interface PublicPageRef {
  publicationId: number;
  /** Milliseconds of the latest change to the build, its builder or the publisher. */
  contextMs: number;
}

/**
 * The page a story shows now, or null when it is not public. One query, as the cached route needs;
 * the version is a scalar subquery so the outer lookup stays a one-table primary-key read (on this
 * machine the cached routes ran faster than with the same tables joined, within run-to-run noise).
 */
export async function currentPublicPage(storyId: number): Promise<PublicPageRef | null> {
  const [row] = await sql().query<{ id: number; context_ms: string }>(
    `SELECT s.published_publication_id AS id,
            (SELECT (EXTRACT(EPOCH FROM GREATEST(b.updated_at, u.updated_at, pu.updated_at)) * 1000)::bigint
               FROM builds b, users u, story_publications p LEFT JOIN users pu ON pu.id = p.published_by
              WHERE b.id = s.build_id AND u.id = b.owner_id AND p.id = s.published_publication_id) AS context_ms
       FROM stories s
      WHERE s.id = :storyId AND ${PUBLIC_STORY_SQL}`,
    { type: QueryTypes.SELECT, replacements: { storyId } },
  );
  return row ? { publicationId: row.id, contextMs: Number(row.context_ms) } : null;
}

/** The claims of a publication with their evidence, rendered from its own figures. */
export function claimsWithEvidence(body: string, e: PublishedEvidence, units: UnitSystem | null): { html: string; claims: PublicClaim[] } {
  const rendered = renderStory(body, { targets: claimTargetsFrom(e.readings, e.clearances) });
  const readingById = new Map(e.readings.map((r) => [r.id, r]));
  const readingByKey = new Map(e.readings.map((r) => [r.key, r]));
  const clearanceByKey = new Map(e.clearances.map((c) => [c.key, c]));
  const claims = rendered.claims.map((c): PublicClaim => {
    const clearance = c.kind === 'clearance' ? clearanceByKey.get(c.key) : undefined;
    const readings =
      c.kind === 'reading'
        ? [readingByKey.get(c.key)].filter((r) => r !== undefined)
        : (clearance?.terms ?? []).map((t) => readingById.get(t.readingId)).filter((r) => r !== undefined);
    return {
      kind: c.kind,
      key: c.key,
      text: c.text,
      line: c.line,
      anchor: `claim-${c.kind}-${c.key}`,
      state: c.status.state,
      display: c.target?.display ?? null,
      verdict: c.target?.verdict ?? null,
      clearance: clearance ? publicClearance(clearance, units) : null,
      readings: readings.map((r) => publicReading(r, units)),
    };
  });
  return { html: rendered.html, claims };
}

/** The claims with each reading's media addresses versioned, so they may be kept by shared caches for good. */
async function withMediaVersions(claims: PublicClaim[]): Promise<PublicClaim[]> {
  const versions = await mediaVersions(claims.flatMap((c) => c.readings.map((r) => r.moment.clipId)));
  return claims.map((c) => ({
    ...c,
    readings: c.readings.map((r) => {
      const v = versions.get(r.moment.clipId);
      return { ...r, moment: { ...r.moment, stillUrl: versioned(r.moment.stillUrl, v), clipUrl: versioned(r.moment.clipUrl, v), posterUrl: versioned(r.moment.posterUrl, v) } };
    }),
  }));
}

/** Builds the public page of one publication (what the cache keeps). */
export async function buildPublicStory(publicationId: number, units: UnitSystem | null): Promise<PublicStory> {
  const publication = await StoryPublication.findByPk(publicationId);
  if (!publication) throw notFound('There is no published story with that id.');
  const story = (await Story.findByPk(publication.storyId, { attributes: ['id', 'buildId'] }))!;
  const build = (await Build.findByPk(story.buildId, { include: [{ model: Part, as: 'parts' }] }))!;
  const [owner, publisher, covers] = await Promise.all([
    User.findByPk(build.ownerId),
    User.findByPk(publication.publishedBy),
    coverUrls([publication.coverMomentId]),
  ]);
  const e = evidenceOf(publication);
  const { html, claims: unversioned } = claimsWithEvidence(publication.body, e, units);
  const claims = await withMediaVersions(unversioned);
  const partsWithReadings = new Set(e.readings.map((r) => r.partId).filter((id) => id !== null));
  return {
    storyId: story.id,
    revision: publication.number,
    publicationId: publication.id,
    title: publication.title,
    summary: publication.summary,
    tags: publication.tags,
    workDate: publication.workDate,
    coverUrl: publication.coverMomentId === null ? null : (covers.get(publication.coverMomentId) ?? null),
    publishedAt: publication.publishedAt.toISOString(),
    publisher: { id: publication.publishedBy, displayName: publisher?.displayName ?? '' },
    html,
    claims,
    standingNote: STANDING_NOTE,
    units,
    build: { id: build.id, title: build.title, subject: build.subject, parts: publicParts(build.parts ?? [], partsWithReadings) },
    builder: builderRef(owner!),
    feedUrl: builderFeedPath(owner!.login),
  };
}

function publicParts(parts: Part[], withReadings: Set<number>) {
  return [...parts]
    .sort((a, b) => a.position - b.position)
    .map((p) => ({
      id: p.id,
      name: p.name,
      serial: p.serial,
      sheetUrl: withReadings.has(p.id) ? `/api/public/parts/${p.id}/sheet` : null,
      pdfUrl: withReadings.has(p.id) ? `/sheets/parts/${p.id}.pdf` : null,
    }));
}

/** Built story pages by page (publication and context version) and units. */
const storyCache = new LruCache<PublicStory>(200);
// The same pages as JSON text, and gzipped when a reader first asks for that: a published
// revision never changes, so each is serialised and compressed once.
const storyBodyCache = new LruCache<{ json: string; gzip?: Buffer }>(200);

/** Content codings the story route sends: as is, or gzip (RFC 9110 §8.4.1.3). */
export type StoryCoding = 'identity' | 'gzip';

/**
 * The ETag of a public page in a system of units and a coding: it changes with a new publication
 * or a change to the build, the builder or the publisher, never otherwise. The gzipped body is
 * another representation, so it has its own strong tag.
 */
export function storyEtag(page: PublicPageRef, units: UnitSystem | null, coding: StoryCoding = 'identity'): string {
  return `"p${page.publicationId}.${page.contextMs.toString(36)}-${units ?? 'entered'}${coding === 'gzip' ? '-gzip' : ''}"`;
}

const pageKey = (page: PublicPageRef, units: UnitSystem | null) => `${page.publicationId}:${page.contextMs}:${units ?? ''}`;

/** The cached page, ready to send: JSON text, or its gzip bytes. */
export async function cachedPublicStoryBody(page: PublicPageRef, units: UnitSystem | null, coding: StoryCoding = 'identity'): Promise<string | Buffer> {
  const key = pageKey(page, units);
  let entry = storyBodyCache.get(key);
  if (entry === undefined) {
    entry = { json: JSON.stringify(await cachedPublicStory(page, units)) };
    storyBodyCache.set(key, entry);
  }
  if (coding === 'identity') return entry.json;
  entry.gzip ??= zlib.gzipSync(entry.json);
  return entry.gzip;
}

export async function cachedPublicStory(page: PublicPageRef, units: UnitSystem | null): Promise<PublicStory> {
  const key = pageKey(page, units);
  const hit = storyCache.get(key);
  if (hit) return hit;
  const built = await buildPublicStory(page.publicationId, units);
  storyCache.set(key, built);
  return built;
}

// ---------------------------------------------------------------------------------------------
// Builds and builders

function byWorkDate(a: StoryPublication, b: StoryPublication): number {
  // Entries without a work date go last; ties by when they were published.
  if (a.workDate !== b.workDate) {
    if (a.workDate === null) return 1;
    if (b.workDate === null) return -1;
    return a.workDate < b.workDate ? -1 : 1;
  }
  return a.publishedAt.getTime() - b.publishedAt.getTime() || a.id - b.id;
}

/** A build with at least one public entry: its entries in work order and every checked clearance across them. */
export async function publicBuild(buildId: number): Promise<PublicBuild> {
  const missing = () => notFound('There is no public build with that id.');
  const build = await Build.findByPk(buildId, { include: [{ model: Part, as: 'parts' }] });
  if (!build) throw missing();
  const publications = (await currentPublications({ buildIds: [build.id] })).sort(byWorkDate);
  if (publications.length === 0) throw missing();
  const [owner, covers] = await Promise.all([User.findByPk(build.ownerId), coverUrls(publications.map((p) => p.coverMomentId))]);

  const summaries = new Map<string, PublicClearanceSummary>();
  const partsWithReadings = new Set<number>();
  for (const p of publications) {
    const e = evidenceOf(p);
    for (const r of e.readings) if (r.partId !== null) partsWithReadings.add(r.partId);
    for (const c of e.clearances) {
      if (!c.result || !c.checked) continue;
      const figures = resultFigures(c.result);
      const known = summaries.get(c.key);
      // Entries of one key are compared on one scale: in the first entry's unit (a length's µm figures need none).
      const value = known && known.unit !== c.result.unit && quantityOf(known.unit) === figures.quantity ? convertNumber(figures.value, c.result.unit, known.unit) : figures.value;
      const expanded =
        known && known.unit !== c.result.unit && quantityOf(known.unit) === figures.quantity
          ? convertNumber(figures.expandedUncertainty, c.result.unit, known.unit, { difference: true })
          : figures.expandedUncertainty;
      const figure: PublicClearanceFigure = {
        storyId: p.storyId,
        revision: p.number,
        storyTitle: p.title,
        workDate: p.workDate,
        valueUm: figures.quantity === 'length' ? c.result.valueUm : null,
        expandedUncertaintyUm: figures.quantity === 'length' ? c.result.expandedUncertaintyUm : null,
        value,
        expandedUncertainty: expanded,
        display: c.result.display,
        verdict: c.result.verdict,
        rule: c.result.rule,
        spec: c.spec ? { name: c.spec.name, version: c.spec.version, sourceText: c.spec.sourceText } : null,
      };
      if (known) {
        known.entries.push(figure);
        known.latest = figure;
      } else {
        summaries.set(c.key, { key: c.key, name: c.name, quantity: figures.quantity, unit: c.result.unit, first: figure, latest: figure, entries: [figure] });
      }
    }
  }
  return {
    id: build.id,
    title: build.title,
    subject: build.subject,
    builder: builderRef(owner!),
    parts: publicParts(build.parts ?? [], partsWithReadings),
    entries: publications.map((p) => ({
      storyId: p.storyId,
      revision: p.number,
      title: p.title,
      summary: p.summary,
      workDate: p.workDate,
      publishedAt: p.publishedAt.toISOString(),
      coverUrl: p.coverMomentId === null ? null : (covers.get(p.coverMomentId) ?? null),
    })),
    clearances: [...summaries.values()],
  };
}

/** An account counts as a builder when its role is builder or it has builds of its own (a moderator who builds). */
export async function isBuilderAccount(user: Pick<User, 'id' | 'role'>): Promise<boolean> {
  if (user.role === 'builder') return true;
  return (await Build.count({ where: { ownerId: user.id } })) > 0;
}

/** A builder's public profile; 404 for unknown logins and accounts that do not build. */
export async function publicBuilderProfile(login: string, viewer: User | undefined): Promise<PublicBuilderProfile> {
  const user = await User.findOne({ where: { login } });
  if (!user || !(await isBuilderAccount(user))) throw notFound('There is no builder with that login.');
  const [builds, followerCount, follow] = await Promise.all([
    sql().query<{ id: number; title: string; subject: string; entry_count: number; latest: Date; cover_moment_id: number | null }>(
      `SELECT b.id, b.title, b.subject, count(*) AS entry_count, max(p.published_at) AS latest,
              (array_agg(p.cover_moment_id ORDER BY p.published_at DESC) FILTER (WHERE p.cover_moment_id IS NOT NULL))[1] AS cover_moment_id
         FROM stories s
         JOIN story_publications p ON p.id = s.published_publication_id
         JOIN builds b ON b.id = s.build_id
        WHERE ${PUBLIC_STORY_SQL} AND b.owner_id = :ownerId
        GROUP BY b.id
        ORDER BY latest DESC, b.id DESC`,
      { type: QueryTypes.SELECT, replacements: { ownerId: user.id } },
    ),
    Follow.count({ where: { builderId: user.id } }),
    viewer && viewer.id !== user.id ? Follow.findOne({ where: { followerId: viewer.id, builderId: user.id } }) : Promise.resolve(undefined),
  ]);
  const covers = await coverUrls(builds.map((b) => b.cover_moment_id));
  return {
    id: user.id,
    login: user.login,
    displayName: user.displayName,
    shop: user.shop ?? null,
    bio: user.bio ?? null,
    avatarUrl: user.avatarUrl,
    followerCount,
    builds: builds.map((b) => ({
      id: b.id,
      title: b.title,
      subject: b.subject,
      entryCount: Number(b.entry_count),
      latestPublishedAt: new Date(b.latest).toISOString(),
      coverUrl: b.cover_moment_id === null ? null : (covers.get(b.cover_moment_id) ?? null),
    })),
    following: follow === undefined ? null : follow !== null,
    emailOnPublish: follow ? follow.emailOnPublish : null,
    feedUrl: builderFeedPath(user.login),
  };
}

// ---------------------------------------------------------------------------------------------
// Media

/**
 * What of a clip the public may fetch: its video and poster when a current publication cites a
 * reading on it, and stills only at the moments a current publication cites (its readings' moments
 * and its cover); otherwise 404 (draft media stays private). Stills at any other time are refused
 * before anything is cut, so anonymous requests cannot fill the media store (OWASP ASVS V2.4).
 */
export async function publicClipScope(clipId: number): Promise<{ clip: Clip; full: boolean; coverTimesMs: Set<number>; stillTimesMs: Set<number> }> {
  const missing = () => notFound('There is no public clip with that id.');
  const rows = await sql().query<{ cover_moment_id: number | null; cites: boolean }>(
    `SELECT p.cover_moment_id, COALESCE((p.evidence->'readings') @> CAST(:cites AS jsonb), false) AS cites
       FROM stories s
       JOIN story_publications p ON p.id = s.published_publication_id
      WHERE ${PUBLIC_STORY_SQL}
        AND ((p.evidence->'readings') @> CAST(:cites AS jsonb)
             OR p.cover_moment_id IN (SELECT m.id FROM moments m WHERE m.clip_id = :clipId))`,
    { type: QueryTypes.SELECT, replacements: { clipId, cites: JSON.stringify([{ clipId }]) } },
  );
  if (rows.length === 0) throw missing();
  const clip = await Clip.findByPk(clipId);
  if (!clip || clip.status !== 'ready') throw missing();
  const full = rows.some((r) => r.cites);
  const coverIds = rows.map((r) => r.cover_moment_id).filter((id): id is number => id !== null);
  const covers = coverIds.length === 0 ? [] : await Moment.findAll({ where: { id: coverIds, clipId }, attributes: ['atMs'] });
  const cited = full
    ? await sql().query<{ at_ms: number }>(
        `SELECT DISTINCT (r->>'atMs')::int AS at_ms
           FROM stories s
           JOIN story_publications p ON p.id = s.published_publication_id
           CROSS JOIN LATERAL jsonb_array_elements(p.evidence->'readings') r
          WHERE ${PUBLIC_STORY_SQL} AND (p.evidence->'readings') @> CAST(:cites AS jsonb) AND (r->>'clipId')::int = :clipId`,
        { type: QueryTypes.SELECT, replacements: { clipId, cites: JSON.stringify([{ clipId }]) } },
      )
    : [];
  const coverTimesMs = new Set(covers.map((m) => m.atMs));
  return { clip, full, coverTimesMs, stillTimesMs: new Set([...coverTimesMs, ...cited.map((c) => Number(c.at_ms))]) };
}
