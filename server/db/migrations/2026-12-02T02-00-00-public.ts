import { DataTypes, type QueryInterface } from 'sequelize';

/**
 * The public side: readers' questions on published stories with the builder's answer (and a
 * moderator's hiding), readers' preferences on their account, and indexes for the public lists.
 */
export async function up({ context: q }: { context: QueryInterface }) {
  const now = { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW };
  const user = (allowNull: boolean) => ({
    type: DataTypes.INTEGER,
    allowNull,
    references: { model: 'users', key: 'id' },
    onDelete: 'RESTRICT',
  });
  const sql = (text: string) => q.sequelize.query(text);

  await q.createTable('questions', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    story_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'stories', key: 'id' }, onDelete: 'CASCADE' },
    author_id: { ...user(false), onDelete: 'CASCADE' },
    // Plain text as typed; never rendered as HTML.
    body: { type: DataTypes.TEXT, allowNull: false },
    answer_body: { type: DataTypes.TEXT, allowNull: true },
    answered_by: user(true),
    answered_at: { type: DataTypes.DATE, allowNull: true },
    hidden_by: user(true),
    hidden_at: { type: DataTypes.DATE, allowNull: true },
    hidden_reason: { type: DataTypes.TEXT, allowNull: true },
    created_at: now,
    updated_at: now,
  });
  await q.addIndex('questions', ['story_id', 'id']);
  await q.addIndex('questions', ['author_id']);
  await q.addIndex('questions', ['answered_by']);
  await q.addIndex('questions', ['hidden_by']);
  await sql(`ALTER TABLE questions ADD CONSTRAINT questions_body_length CHECK (char_length(body) BETWEEN 1 AND 2000)`);

  await q.addColumn('users', 'units_preference', { type: DataTypes.STRING(8), allowNull: true });
  await sql(`ALTER TABLE users ADD CONSTRAINT users_units_preference_check CHECK (units_preference IN ('imperial','metric'))`);
  await q.addColumn('users', 'weekly_digest', { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false });

  // The public lists filter by tag (containment) over the current publications.
  await sql(`CREATE INDEX story_publications_tags_gin ON story_publications USING gin (tags jsonb_path_ops)`);
  // Newest first over current publications only: the join starts from stories that have one.
  await sql(`CREATE INDEX stories_public_idx ON stories (published_publication_id) WHERE published_publication_id IS NOT NULL AND withdrawn_by IS NULL AND state <> 'withdrawn'`);
}

export async function down({ context: q }: { context: QueryInterface }) {
  await q.sequelize.query('DROP INDEX IF EXISTS stories_public_idx');
  await q.sequelize.query('DROP INDEX IF EXISTS story_publications_tags_gin');
  await q.removeColumn('users', 'weekly_digest');
  await q.sequelize.query('ALTER TABLE users DROP CONSTRAINT IF EXISTS users_units_preference_check');
  await q.removeColumn('users', 'units_preference');
  await q.dropTable('questions');
}
