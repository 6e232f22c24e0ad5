import { DataTypes, type QueryInterface } from 'sequelize';

/**
 * Readings proposed from a clip's sound that its builder set aside: one row per clip and
 * proposal id ("<startMs>-<n>", stable while the clip's words stay the same), so a dismissed
 * proposal stays dismissed across visits and can be brought back (the row deleted). A proposal
 * is never stored itself: it is worked out from `clip_words` on each request.
 */
export async function up({ context: q }: { context: QueryInterface }) {
  await q.createTable('proposal_dismissals', {
    // With proposal_id the key: one dismissal per proposal (its index also serves the foreign key).
    clip_id: { type: DataTypes.INTEGER, allowNull: false, primaryKey: true, references: { model: 'clips', key: 'id' }, onDelete: 'CASCADE' },
    proposal_id: { type: DataTypes.TEXT, allowNull: false, primaryKey: true },
    dismissed_by: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'users', key: 'id' }, onDelete: 'RESTRICT' },
    created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: q.sequelize.fn('now') },
  });
  await q.sequelize.query(
    `ALTER TABLE proposal_dismissals ADD CONSTRAINT proposal_dismissals_id_check CHECK (proposal_id ~ '^[0-9]{1,10}-[0-9]{1,4}$')`,
  );
  await q.addIndex('proposal_dismissals', ['dismissed_by']);
}

export async function down({ context: q }: { context: QueryInterface }) {
  await q.dropTable('proposal_dismissals');
}
