import type { QueryInterface } from 'sequelize';

/** A published revision is what readers were shown: the database refuses to change or remove one. */
export async function up({ context: q }: { context: QueryInterface }) {
  await q.sequelize.query(`CREATE FUNCTION story_publications_refuse_change() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN RAISE EXCEPTION 'story_publications rows are written once and never changed'; END $$`);
  await q.sequelize.query(`CREATE TRIGGER story_publications_append_only BEFORE UPDATE OR DELETE ON story_publications
    FOR EACH ROW EXECUTE FUNCTION story_publications_refuse_change()`);
}

export async function down({ context: q }: { context: QueryInterface }) {
  await q.sequelize.query('DROP TRIGGER IF EXISTS story_publications_append_only ON story_publications');
  await q.sequelize.query('DROP FUNCTION IF EXISTS story_publications_refuse_change()');
}
