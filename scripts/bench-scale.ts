// `npm run bench:scale`: how the public list and story routes hold up as the data grows. Publishes
// ONE story through the real services and review workflow, then generates invented builders,
// builds, clips, moments, readings, clearances, stories and publications around it in bulk (each
// generated row a copy of the real one with its ids, keys and figures changed), and measures the
// public routes with autocannon at 1,000 stories, 10,000 stories, and 10,000 stories with 200,000
// readings. Prints figures, the plan of the slowest route's query and the plans of the searches
// (full text: a common word, a rare word, a phrase, a part's serial; and a partial word, which
// finds nothing by its words and falls back to the trigram indexes); asserts nothing.
// Uses its own throwaway cluster (.data/postgres-scale), never the demo or test data.
import crypto from 'node:crypto';
import http from 'node:http';
import type { AddressInfo } from 'node:net';
import os from 'node:os';
import autocannon from 'autocannon';
import { QueryTypes } from 'sequelize';
import { clearanceInputSchema } from '../shared/clearances/clearance.schema';
import { readingInputSchema } from '../shared/readings/reading.schema';
import { createApp } from '../server/app';
import { createClearance } from '../server/features/clearances/clearances.service';
import { Moment } from '../server/features/clips/clip.model';
import type { PublishedEvidence } from '../server/features/public/publication';
import { createReading, readingDtosForBuild } from '../server/features/readings/readings.service';
import { claimStory, evidenceOf, recordCheck, transition } from '../server/features/review/review.service';
import { Story } from '../server/features/stories/story.model';
import { createStory } from '../server/features/stories/stories.service';
import { localStorage } from '../server/storage/local-storage';
import { benchEnvironment, benchFixtures, readyClip } from './lib/bench-env';

const SECONDS = Number(process.env.BENCH_SECONDS ?? 5);
const CONNECTIONS = Number(process.env.BENCH_CONNECTIONS ?? 10);
const BUILDERS = 100;
const STORIES_PER_BUILD = 10;
const READINGS_PER_STORY = 4;
// Generated rows take ids from here up, far above the sequences, so every id is known in advance
// (a story's publication, readings and moments follow from its index without reading anything back).
const BASE = 1_000_000;
const EXTRA_READING_BASE = 5_000_000;

const { config, sequelize, logger, mediaDir, close } = await benchEnvironment('postgres-scale', 54361);
const q = <T extends object>(text: string, replacements: Record<string, unknown> = {}) => sequelize.query<T>(text, { type: QueryTypes.SELECT, replacements });

/**
 * Copies of one row of `table`, each with the columns in its patch replaced (snake_case names):
 * jsonb_populate_record keeps the template's value for every column the patch leaves out, so
 * columns this script does not know about are still filled in as the real services filled them.
 */
async function cloneRows(table: string, templateId: number, patches: Record<string, unknown>[]) {
  for (let i = 0; i < patches.length; i += 5000) {
    await sequelize.query(
      `INSERT INTO ${table} SELECT (jsonb_populate_record(t, x.value)).* FROM ${table} t CROSS JOIN jsonb_array_elements(CAST(:rows AS jsonb)) x WHERE t.id = :templateId`,
      { replacements: { rows: JSON.stringify(patches.slice(i, i + 5000)), templateId } },
    );
  }
}

const MACHINES = ['vellum-1100', 'kestrel-650', 'marlow-twin', 'ardent-4'];
const COMPONENTS = ['crankshaft', 'cylinder-head', 'oil-pump', 'gearbox', 'camshaft'];
const OPERATIONS = ['end-float', 'bore-check', 'valve-lash', 'line-bore', 'run-out', 'plastigauge'];
const WORDS = ['thrust', 'washer', 'journal', 'shim', 'feeler', 'bearing', 'gallery'];
// A word almost nothing contains: the template's title (one publication at every size) and the
// summary of one generated story in every 5,000 (none at 1k, two at 10k). A search for it must
// find those few among all the rest, which is where a scan in published order costs the most.
const RARE = 'wyvern';
const rareInSummary = (i: number) => i % 5000 === 2500;
// Every generated build has one part with its own serial, so a serial is in its build's 10 stories.
const serialOf = (b: number) => `SB-${String(b).padStart(4, '0')}`;
const SERIAL = serialOf(41);
// In every story's text and its clearances' names ("So the end float is …", "End float 1").
const PHRASE = '"end float"';
// No story has it as a word: the full-text search finds nothing and the trigram fallback answers.
const PARTIAL = 'thrus';

try {
  // ---------------------------------------------------------------------------------------------
  // The template: one story made and published the way a builder and a moderator would (invented
  // figures). Four readings, two clearances: c1 within the spec, c2 outside it.
  const { owner, moderator, build, mic, version } = await benchFixtures({ title: 'Scale template build (invented)', subject: 'the story every generated one copies' });
  const clip = await readyClip(build.id, 'Scale template clip', 0, 'scale-template.mp4');
  const values = ['0.5000', '0.5040', '0.5000', '0.5120'];
  const moments: Moment[] = [];
  for (let k = 0; k < READINGS_PER_STORY; k += 1) {
    const moment = await Moment.create({ clipId: clip.id, atMs: 2000 + k * 4000, label: `station ${k + 1}`, createdBy: owner.id });
    moments.push(moment);
    await createReading(build, owner, readingInputSchema.parse({ momentId: moment.id, instrumentId: mic.id, key: `r${k + 1}`, name: `Station ${k + 1}`, kind: 'direct', value: values[k], takenOn: '2026-11-10' }));
  }
  const tplReadings = await readingDtosForBuild(build.id);
  for (const [c, a, b] of [[1, 0, 1], [2, 2, 3]] as const) {
    await createClearance(
      build,
      owner,
      clearanceInputSchema.parse({
        key: `c${c}`,
        name: `End float ${c}`,
        template: 'custom',
        terms: [
          { readingId: tplReadings[b]!.id, sign: 1 },
          { readingId: tplReadings[a]!.id, sign: -1 },
        ],
        specVersionId: version.id,
      }),
    );
  }
  // Paragraph 3 (line 5) carries everything of the out-of-spec clearance, so an in-spec copy is the
  // first two paragraphs and the claims on lines 1 and 3.
  const tplBody = [
    'Stations one and two: [front face](reading:r1) and [rear face](reading:r2).',
    'So the end float is [first gap](clearance:c1).',
    'After the second washer: [front again](reading:r3), [rear again](reading:r4), [second gap](clearance:c2).',
  ].join('\n\n');
  const tplStory = await createStory(build, owner, {
    title: `Scale template entry, the ${RARE} crank (invented)`,
    summary: 'Crank end float, checked twice.',
    workDate: '2026-11-10',
    body: tplBody,
    tags: { machine: ['vellum-1100'], component: ['crankshaft'], operation: ['end-float'] },
    coverMomentId: moments[0]!.id,
  });
  const review = { config, queue: null };
  const lock = async () => (await Story.findByPk(tplStory.id))!.lockVersion;
  await transition(tplStory.id, owner, { action: 'submit', lockVersion: await lock() }, review);
  await claimStory(tplStory.id, moderator, review);
  const judged = await evidenceOf((await Story.findByPk(tplStory.id))!);
  for (const r of judged.citedReadings) await recordCheck(moderator, { storyId: tplStory.id, subjectType: 'reading', subjectId: r.id, state: 'checked', comment: '' }, review);
  for (const c of judged.citedClearances) await recordCheck(moderator, { storyId: tplStory.id, subjectType: 'clearance', subjectId: c.id, state: 'checked', comment: '' }, review);
  await transition(tplStory.id, moderator, { action: 'publish', lockVersion: await lock() }, review);

  const [published] = await q<{ id: number; evidence: PublishedEvidence; body: string }>(
    `SELECT p.id, p.evidence, p.body FROM stories s JOIN story_publications p ON p.id = s.published_publication_id WHERE s.id = :id`,
    { id: tplStory.id },
  );
  if (!published) throw new Error('the template story was not published');
  const tplPub = published;
  const tplEvidence = tplPub.evidence;
  const verdicts = tplEvidence.clearances.map((c) => `${c.key}: ${c.result?.verdict ?? 'none'}`).join(', ');
  if (!tplEvidence.clearances.some((c) => c.result?.verdict === 'does-not-conform')) throw new Error(`the template has no out-of-spec clearance (${verdicts})`);
  const tplTerms = await q<{ id: number; clearance_id: number; reading_id: number }>(`SELECT id, clearance_id, reading_id FROM clearance_terms WHERE clearance_id IN (:ids) ORDER BY id`, {
    ids: tplEvidence.clearances.map((c) => c.id),
  });
  const readingIndex = new Map(tplReadings.map((r, k) => [r.id, k]));
  const clearanceIndex = new Map(tplEvidence.clearances.map((c, k) => [c.id, k]));
  const tplReadingId = tplReadings[0]!.id;
  const tplClearanceId = tplEvidence.clearances[0]!.id;

  // ---------------------------------------------------------------------------------------------
  // The generator. Story i lives in build floor(i / 10); its ids are BASE + i (story and
  // publication), BASE + 4i + k (readings and moments), BASE + 2i + c (clearances).
  const ids = {
    user: (u: number) => BASE + u,
    build: (i: number) => BASE + Math.floor(i / STORIES_PER_BUILD),
    story: (i: number) => BASE + i,
    reading: (i: number, k: number) => BASE + i * READINGS_PER_STORY + k,
    clearance: (i: number, c: number) => BASE + i * 2 + c,
  };
  const keyOf = (i: number, key: string) => `e${i}-${key}`;
  const outOfSpec = (i: number) => i % 10 === 3;
  const pick = <T>(list: T[], n: number) => list[n % list.length]!;
  const publishedAt = (i: number) => new Date(Date.UTC(2026, 10, 30) - i * 7 * 60_000).toISOString();

  let builders = 0;
  async function addBuilders() {
    if (builders > 0) return;
    await cloneRows(
      'users',
      owner.id,
      Array.from({ length: BUILDERS }, (_, u) => ({
        id: ids.user(u),
        github_id: `scale-${u}`,
        login: `scale-builder-${u}`,
        display_name: `Scale builder ${u} (invented)`,
        shop: `Bench ${u} (invented)`,
        email: null,
        is_demo: true,
      })),
    );
    builders = BUILDERS;
  }

  async function addStories(from: number, to: number) {
    await addBuilders();
    const builds: Record<string, unknown>[] = [];
    for (let b = from / STORIES_PER_BUILD; b < to / STORIES_PER_BUILD; b += 1) {
      builds.push({ id: BASE + b, owner_id: ids.user(b % BUILDERS), title: `Generated build ${b} (invented)`, subject: `${pick(MACHINES, b)} rebuild` });
    }
    await cloneRows('builds', build.id, builds);
    await sequelize.query(
      `INSERT INTO parts (build_id, name, serial, position, created_at, updated_at)
       SELECT b.id, 'Crankshaft (invented)', x.serial, 0, now(), now() FROM jsonb_to_recordset(CAST(:rows AS jsonb)) AS x(id integer, serial text) JOIN builds b ON b.id = x.id`,
      { replacements: { rows: JSON.stringify(builds.map((b) => ({ id: b.id, serial: serialOf(Number(b.id) - BASE) }))) } },
    );
    await cloneRows(
      'clips',
      clip.id,
      builds.map((b) => ({ id: b.id, build_id: b.id, title: `Bench session ${String(b.id)}`, storage_prefix: crypto.randomUUID() })),
    );
    const momentRows: Record<string, unknown>[] = [];
    const readingRows: Record<string, unknown>[] = [];
    const clearanceRows: Record<string, unknown>[] = [];
    const termRows: Record<string, unknown>[] = [];
    const storyRows: Record<string, unknown>[] = [];
    const pubRows: Record<string, unknown>[] = [];
    for (let i = from; i < to; i += 1) {
      const buildId = ids.build(i);
      const title = `${pick(COMPONENTS, i)} ${pick(OPERATIONS, Math.floor(i / 5))}, ${pick(WORDS, Math.floor(i / 3))} session ${i} (invented)`;
      const summary = `Generated entry ${i}: ${pick(WORDS, i + 2)} and ${pick(WORDS, i + 4)} on the bench${rareInSummary(i) ? `, next to the ${RARE} stand` : ''}.`;
      const tags = { machine: [pick(MACHINES, i)], component: [pick(COMPONENTS, Math.floor(i / 4))], operation: [pick(OPERATIONS, Math.floor(i / 7))] };
      for (let k = 0; k < READINGS_PER_STORY; k += 1) {
        momentRows.push({ id: ids.reading(i, k), clip_id: buildId, at_ms: 2000 + k * 4000 });
        const value = (Number(values[k]) + (i % 7) * 0.0001).toFixed(4);
        readingRows.push({ id: ids.reading(i, k), build_id: buildId, moment_id: ids.reading(i, k), key: keyOf(i, `r${k + 1}`), value, entered: { value } });
      }
      for (let c = 0; c < 2; c += 1) clearanceRows.push({ id: ids.clearance(i, c), build_id: buildId, key: keyOf(i, `c${c + 1}`) });
      for (const t of tplTerms) {
        const c = clearanceIndex.get(t.clearance_id)!;
        termRows.push({ id: BASE + termRows.length + from * tplTerms.length, clearance_id: ids.clearance(i, c), reading_id: ids.reading(i, readingIndex.get(t.reading_id)!) });
      }
      // The published evidence: the template's, with this story's ids and keys; in-spec copies
      // leave out the third paragraph and what it cites.
      const keep = outOfSpec(i) ? () => true : (key: string) => !['r3', 'r4', 'c2'].includes(key);
      const e = tplEvidence;
      const evidence: PublishedEvidence = {
        buildId,
        claims: e.claims.filter((c) => keep(c.key)).map((c) => ({
          ...c,
          key: keyOf(i, c.key),
          subjectId: c.subjectId === null ? null : c.kind === 'reading' ? ids.reading(i, readingIndex.get(c.subjectId)!) : ids.clearance(i, clearanceIndex.get(c.subjectId)!),
        })),
        readings: e.readings.filter((r) => keep(r.key)).map((r) => {
          const k = readingIndex.get(r.id)!;
          return { ...r, id: ids.reading(i, k), buildId, momentId: ids.reading(i, k), clipId: buildId, key: keyOf(i, r.key) };
        }),
        clearances: e.clearances.filter((c) => keep(c.key)).map((c) => ({
          ...c,
          id: ids.clearance(i, clearanceIndex.get(c.id)!),
          buildId,
          key: keyOf(i, c.key),
          terms: c.terms.map((t) => ({ ...t, readingId: ids.reading(i, readingIndex.get(t.readingId)!), readingKey: keyOf(i, t.readingKey) })),
        })),
      };
      const paragraphs = tplPub.body.split('\n\n');
      const body = (outOfSpec(i) ? paragraphs : paragraphs.slice(0, 2)).join('\n\n').replace(/\((reading|clearance):([a-z0-9-]+)\)/g, (_m, kind: string, key: string) => `(${kind}:${keyOf(i, key)})`);
      const at = publishedAt(i);
      const common = { title, summary, tags, body, cover_moment_id: ids.reading(i, 0) };
      storyRows.push({ id: ids.story(i), build_id: buildId, ...common, published_publication_id: null, created_at: at, updated_at: at });
      pubRows.push({ id: ids.story(i), story_id: ids.story(i), number: 1, ...common, evidence, published_at: at });
    }
    await cloneRows('moments', moments[0]!.id, momentRows);
    await cloneRows('readings', tplReadingId, readingRows);
    await cloneRows('clearances', tplClearanceId, clearanceRows);
    await cloneRows('clearance_terms', tplTerms[0]!.id, termRows);
    // Stories and publications name each other: stories first, then the publication, then the link.
    await cloneRows('stories', tplStory.id, storyRows);
    await cloneRows('story_publications', tplPub.id, pubRows);
    await sequelize.query(`UPDATE stories SET published_publication_id = id WHERE id >= :from AND id < :to`, { replacements: { from: ids.story(from), to: ids.story(to) } });
  }

  /** Readings nobody cites yet (the rest of each build's bench log), spread over the builds. */
  async function addReadings(total: number, stories: number) {
    const [{ n }] = (await q<{ n: string }>(`SELECT count(*) AS n FROM readings`)) as [{ n: string }];
    const rows: Record<string, unknown>[] = [];
    for (let j = 0; j < total - Number(n); j += 1) {
      const i = (j * 7919) % stories;
      const value = (0.5 + (j % 500) * 0.0001).toFixed(4);
      rows.push({ id: EXTRA_READING_BASE + j, build_id: ids.build(i), moment_id: ids.reading(i, j % READINGS_PER_STORY), key: `log-${j}`, value, entered: { value }, review_state: 'unchecked' });
    }
    await cloneRows('readings', tplReadingId, rows);
  }

  // ---------------------------------------------------------------------------------------------
  // Measuring.
  const built = createApp({ config, sequelize, logger, storage: localStorage(mediaDir), queue: null });
  const server = http.createServer(built.app);
  await new Promise<void>((r) => server.listen(0, '127.0.0.1', r));
  const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  const getJson = async <T>(p: string): Promise<T> => {
    const res = await fetch(base + p);
    if (res.status !== 200) throw new Error(`${p} answered ${res.status}: ${await res.text()}`);
    return (await res.json()) as T;
  };
  const row = (name: string, r: autocannon.Result, plan: Plan | null) =>
    `  ${name.padEnd(34)} ${r.requests.average.toFixed(0).padStart(6)} req/s   p50 ${String(r.latency.p50).padStart(3)} ms   p99 ${String(r.latency.p99).padStart(3)} ms   2xx ${r['2xx']} other ${r.non2xx + r.errors}` +
    (plan ? `   query ${plan.executionMs.toFixed(2)} ms${plan.seqScans.length ? `, seq scan on ${plan.seqScans.join(', ')}` : ''}` : '');

  // The SQL one request runs, as Sequelize sends it (replacements filled in). Sequelize reads its
  // logging option at each query, so a single request can be captured.
  const options = (sequelize as unknown as { options: { logging: false | ((text: string) => void) } }).options;
  async function queriesOf(p: string): Promise<string[]> {
    const logged: string[] = [];
    options.logging = (text: string) => logged.push(text.replace(/^Executing \([^)]*\): /, '').replace(/;\s*$/, ''));
    try {
      await fetch(base + p);
    } finally {
      options.logging = false;
    }
    return logged;
  }
  // A route's main query: the list query, else the longest one it ran.
  const mainOf = (logged: string[]) => logged.find((t) => t.includes('ORDER BY p.published_at')) ?? [...logged].sort((a, b) => b.length - a.length)[0];
  // A search runs one query, or two when its words find nothing (full text, then the trigram fallback).
  const searchesOf = (logged: string[]) => logged.filter((t) => t.includes('benchproof_search_query'));
  type Plan = { executionMs: number; seqScans: string[] };
  type PlanNode = { 'Node Type': string; 'Relation Name'?: string; Plans?: PlanNode[] };
  // The server's own time for the query, free of HTTP and of whatever else the machine is doing.
  async function planOf(sqlText: string | string[] | undefined): Promise<Plan | null> {
    if (Array.isArray(sqlText)) {
      const plans = (await Promise.all(sqlText.map((t) => planOf(t)))).filter((p): p is Plan => p !== null);
      return plans.length ? { executionMs: plans.reduce((a, p) => a + p.executionMs, 0), seqScans: plans.flatMap((p) => p.seqScans) } : null;
    }
    if (!sqlText) return null;
    const [r] = await q<{ 'QUERY PLAN': [{ 'Execution Time': number; Plan: PlanNode }] }>(`EXPLAIN (ANALYZE, FORMAT JSON) ${sqlText}`);
    const top = r!['QUERY PLAN'][0];
    const seqScans: string[] = [];
    const walk = (n: PlanNode) => {
      if (n['Node Type'] === 'Seq Scan' && n['Relation Name']) seqScans.push(n['Relation Name']);
      for (const c of n.Plans ?? []) walk(c);
    };
    walk(top.Plan);
    return { executionMs: top['Execution Time'], seqScans };
  }

  type Page = { items: { storyId: number }[]; nextBefore: string | null };
  async function measure(label: string) {
    // Settled statistics and visibility maps, so autovacuum does not start mid-run after a bulk load.
    await sequelize.query('VACUUM ANALYZE');
    const [counts] = await q<Record<string, string>>(
      `SELECT (SELECT count(*) FROM stories) AS stories, (SELECT count(*) FROM story_publications) AS publications, (SELECT count(*) FROM readings) AS readings,
              (SELECT count(*) FROM clearances) AS clearances, (SELECT count(*) FROM moments) AS moments, (SELECT count(*) FROM builds) AS builds, (SELECT count(*) FROM users) AS users`,
    );
    console.log(`\n${label}: ${Object.entries(counts!).map(([k, v]) => `${v} ${k}`).join(', ')}`);
    // The cursor after page 50, walked the way a reader would.
    let before: string | null = null;
    for (let page = 0; page < 50; page += 1) {
      const r: Page = await getJson<Page>(`/api/public/stories${before ? `?before=${encodeURIComponent(before)}` : ''}`);
      if (!r.nextBefore) break;
      before = r.nextBefore;
    }
    const all = Number(counts!.stories);
    const middle = ids.story(Math.floor((all - 1) / 2));
    // That the copies read as real publications: a generated out-of-spec page and the filtered list.
    const sample = await getJson<{ claims: { state: string; verdict: string | null }[] }>(`/api/public/stories/${ids.story(3)}`);
    const oos = await getJson<{ items: { outOfSpec: boolean }[] }>('/api/public/stories?verdict=out-of-spec');
    const rare = await getJson<Page>(`/api/public/stories?q=${RARE}&limit=50`);
    const serial = await getJson<Page>(`/api/public/stories?q=${SERIAL}&limit=50`);
    console.log(
      `  (story ${ids.story(3)}: ${sample.claims.map((c) => `${c.state}${c.verdict ? `/${c.verdict}` : ''}`).join(' ')}; ` +
        `?verdict=out-of-spec page: ${oos.items.filter((i) => i.outOfSpec).length} of ${oos.items.length} out of spec; ` +
        `?q=${RARE} finds ${rare.items.length}${rare.nextBefore ? '+' : ''}: stories ${rare.items.map((i) => i.storyId).join(', ')}; ` +
        `?q=${SERIAL} finds ${serial.items.length}${serial.nextBefore ? '+' : ''})`,
    );
    const targets: [string, string][] = [
      ['home', '/api/public/stories'],
      [`browse ?tag=${COMPONENTS[1]}`, `/api/public/stories?tag=${COMPONENTS[1]}`],
      [`search ?q=${WORDS[0]} (common word)`, `/api/public/stories?q=${WORDS[0]}`],
      [`search ?q=${RARE} (rare word)`, `/api/public/stories?q=${RARE}`],
      [`search ?q=${PHRASE} (phrase)`, `/api/public/stories?q=${encodeURIComponent(PHRASE)}`],
      [`search ?q=${SERIAL} (serial)`, `/api/public/stories?q=${SERIAL}`],
      [`search ?q=${PARTIAL} (partial word)`, `/api/public/stories?q=${PARTIAL}`],
      ['?verdict=out-of-spec', '/api/public/stories?verdict=out-of-spec'],
      ['deep page (after page 50)', `/api/public/stories?before=${encodeURIComponent(before ?? '')}`],
      [`story ${middle} (middle)`, `/api/public/stories/${middle}`],
    ];
    // Warm-up, not reported: compiles the hot paths and brings the tables into the buffer cache.
    await autocannon({ url: base + targets[0]![1], connections: CONNECTIONS, duration: 2 });
    const results: { name: string; path: string; r: autocannon.Result }[] = [];
    for (const [name, p] of targets) {
      await getJson(p); // fills the page cache the way a first reader would
      const logged = await queriesOf(p);
      const plan = await planOf(searchesOf(logged).length ? searchesOf(logged) : mainOf(logged));
      const r = await autocannon({ url: base + p, connections: CONNECTIONS, duration: SECONDS });
      results.push({ name, path: p, r });
      console.log(row(name, r, plan));
    }
    return results;
  }

  console.log(`Template story ${tplStory.id} published with ${tplEvidence.claims.length} claims (${verdicts}).`);
  console.log(`Machine: ${os.cpus().length} cores (${os.cpus()[0]?.model ?? 'unknown'}), Node ${process.version}; ${CONNECTIONS} connections, ${SECONDS} s each`);
  const timed = async (what: string, f: () => Promise<void>) => {
    const t = Date.now();
    await f();
    console.log(`(generated ${what} in ${((Date.now() - t) / 1000).toFixed(1)} s)`);
  };
  await timed('1,000 stories', () => addStories(0, 1000));
  await measure('1k stories');
  await timed('9,000 more stories', () => addStories(1000, 10_000));
  await measure('10k stories');
  await timed('readings up to 200,000', () => addReadings(200_000, 10_000));
  const last = await measure('10k stories + 200k readings');

  // The plan of the slowest route's main query, as the route ran it.
  const slowest = [...last].sort((a, b) => a.r.requests.average - b.r.requests.average)[0]!;
  const main = mainOf(await queriesOf(slowest.path));
  console.log(`\nSlowest at full size (fewest req/s): ${slowest.name} (${slowest.path}). Its main query and EXPLAIN (ANALYZE, BUFFERS):`);
  if (main) {
    console.log(main.replace(/\s+/g, ' '));
    const plan = await q<{ 'QUERY PLAN': string }>(`EXPLAIN (ANALYZE, BUFFERS) ${main}`);
    console.log(plan.map((p) => p['QUERY PLAN']).join('\n'));
  } else {
    console.log('(no query was logged)');
  }

  // The searches' queries at full size: a common word and a phrase rank every story that has them,
  // a rare word and a serial are a few found among everything, a partial word takes the fallback.
  for (const [word, what] of [[RARE, 'rare word'], [WORDS[0]!, 'common word'], [PHRASE, 'phrase'], [SERIAL, 'serial'], [PARTIAL, 'partial word']] as const) {
    const searched = searchesOf(await queriesOf(`/api/public/stories?q=${encodeURIComponent(word)}`));
    console.log(`\nSearch ?q=${word} (${what}) at full size. Its queries and EXPLAIN (ANALYZE, BUFFERS):`);
    if (searched.length === 0) {
      console.log('(no query was logged)');
      continue;
    }
    for (const text of searched) {
      console.log(text.replace(/\s+/g, ' '));
      const plan = await q<{ 'QUERY PLAN': string }>(`EXPLAIN (ANALYZE, BUFFERS) ${text}`);
      console.log(plan.map((p) => p['QUERY PLAN']).join('\n'));
    }
  }

  await new Promise<void>((r) => server.close(() => r()));
  await built.close();
} finally {
  await close();
}
