import type { QueryInterface } from 'sequelize';

/**
 * The moderator's reason for sending a story back, kept on the story so the builder's screens
 * show it (not only the e-mail): the reason, who asked and when. Cleared when the story is sent
 * for review again.
 */
export async function up({ context: q }: { context: QueryInterface }) {
  await q.sequelize.query(`ALTER TABLE stories
    ADD COLUMN changes_requested_reason TEXT NULL,
    ADD COLUMN changes_requested_by INTEGER NULL REFERENCES users(id) ON DELETE SET NULL,
    ADD COLUMN changes_requested_at TIMESTAMPTZ NULL`);
}

export async function down({ context: q }: { context: QueryInterface }) {
  await q.sequelize.query(`ALTER TABLE stories
    DROP COLUMN IF EXISTS changes_requested_at,
    DROP COLUMN IF EXISTS changes_requested_by,
    DROP COLUMN IF EXISTS changes_requested_reason`);
}
