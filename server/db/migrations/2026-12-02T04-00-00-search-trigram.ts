import type { QueryInterface } from 'sequelize';

/**
 * Word search on the public list (`?q=`), whose filter is `p.title ILIKE :q OR p.summary ILIKE :q`
 * with `:q` = `%word%` (public.service.ts, listPublicStories). A B-tree cannot answer a pattern
 * that starts with `%`, so without these indexes a rare word is found by reading every
 * publication (a sequential scan, or a walk back along published_at that never fills its page),
 * and its cost grows with the table. A trigram GIN index per column lets the planner answer the
 * OR as a BitmapOr of two index scans and sort only the few matches; a common word still walks
 * published_at and stops after one page, as before. One index per column keeps the query text
 * as it was (an index on `title || summary` would need the query rewritten and would match
 * across the join of the two).
 *
 * pg_trgm ships with PostgreSQL (contrib) and is a trusted extension since PG 13: the app's role
 * may create it because it owns the database (scripts/lib/bootstrap.ts creates the database with
 * OWNER benchproof, a role without superuser). A DATABASE_URL whose role lacks CREATE on its
 * database needs the extension created once by an administrator; IF NOT EXISTS then skips it.
 *
 * fastupdate is off: a publication is written once per publish and searched on every list
 * request, and with the pending list on, each search would scan the not-yet-merged entries in
 * full until the next vacuum.
 */
export async function up({ context: q }: { context: QueryInterface }) {
  const sql = (text: string) => q.sequelize.query(text);
  await sql('CREATE EXTENSION IF NOT EXISTS pg_trgm');
  await sql('CREATE INDEX story_publications_title_trgm ON story_publications USING gin (title gin_trgm_ops) WITH (fastupdate = off)');
  await sql('CREATE INDEX story_publications_summary_trgm ON story_publications USING gin (summary gin_trgm_ops) WITH (fastupdate = off)');
}

export async function down({ context: q }: { context: QueryInterface }) {
  const sql = (text: string) => q.sequelize.query(text);
  await sql('DROP INDEX IF EXISTS story_publications_summary_trgm');
  await sql('DROP INDEX IF EXISTS story_publications_title_trgm');
  // Without CASCADE: if anything else has come to use pg_trgm, this refuses rather than drop it.
  await sql('DROP EXTENSION IF EXISTS pg_trgm');
}
