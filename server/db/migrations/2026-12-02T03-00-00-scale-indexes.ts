import type { QueryInterface } from 'sequelize';

/**
 * The out-of-spec public list, newest first. Without this the list walks every publication in
 * published order and opens each one's evidence to test it, so its cost grows as out-of-spec
 * entries get rarer (and on small tables the planner reads them all and sorts). The predicate
 * must stay the same text as the list's filter in public.service.ts (OUT_OF_SPEC) for the
 * planner to use the index.
 */
export async function up({ context: q }: { context: QueryInterface }) {
  await q.sequelize.query(`CREATE INDEX story_publications_out_of_spec_idx ON story_publications (published_at, id)
    WHERE (evidence->'clearances') @> '[{"result":{"verdict":"does-not-conform"}}]'::jsonb`);
}

export async function down({ context: q }: { context: QueryInterface }) {
  await q.sequelize.query('DROP INDEX IF EXISTS story_publications_out_of_spec_idx');
}
