import { DataTypes, type QueryInterface } from 'sequelize';

/**
 * Review and publishing: published revisions (immutable), moderators' claims on stories in
 * review, checks of readings and clearances (with flags and the builder's answers), the audit
 * log (append-only, enforced by a trigger), and follows (who gets mail when a builder publishes).
 */
export async function up({ context: q }: { context: QueryInterface }) {
  const now = { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW };
  const user = (allowNull = false) => ({
    type: DataTypes.INTEGER,
    allowNull,
    references: { model: 'users', key: 'id' },
    onDelete: 'RESTRICT',
  });
  const sql = (text: string) => q.sequelize.query(text);

  // What the public sees: a story as it was when a moderator published it, with the figures of
  // every claim as judged then. Written once, never changed.
  await q.createTable('story_publications', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    story_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'stories', key: 'id' }, onDelete: 'RESTRICT' },
    number: { type: DataTypes.INTEGER, allowNull: false },
    title: { type: DataTypes.STRING(160), allowNull: false },
    summary: { type: DataTypes.STRING(500), allowNull: false },
    cover_moment_id: { type: DataTypes.INTEGER, allowNull: true },
    tags: { type: DataTypes.JSONB, allowNull: false },
    work_date: { type: DataTypes.DATEONLY, allowNull: true },
    body: { type: DataTypes.TEXT, allowNull: false },
    evidence: { type: DataTypes.JSONB, allowNull: false },
    published_by: user(),
    published_at: now,
  });
  await q.addIndex('story_publications', ['story_id', 'number'], { unique: true });
  await q.addIndex('story_publications', ['published_by']);
  await q.addIndex('story_publications', ['published_at', 'id']);

  await q.addColumn('stories', 'published_publication_id', {
    type: DataTypes.INTEGER,
    allowNull: true,
    references: { model: 'story_publications', key: 'id' },
    onDelete: 'RESTRICT',
  });
  await q.addColumn('stories', 'submitted_at', { type: DataTypes.DATE, allowNull: true });
  await q.addColumn('stories', 'withdrawn_reason', { type: DataTypes.TEXT, allowNull: true });
  // A moderator's withdrawal can only be undone by a moderator (or a new review); the builder's by either.
  await q.addColumn('stories', 'withdrawn_by', { ...user(true) });
  await q.addIndex('stories', ['withdrawn_by']);
  await q.addIndex('stories', ['published_publication_id']);
  await q.addIndex('stories', ['state', 'submitted_at', 'id']);

  // One moderator at a time checks a story in review; a claim lapses at expires_at.
  await q.createTable('review_claims', {
    story_id: { type: DataTypes.INTEGER, primaryKey: true, references: { model: 'stories', key: 'id' }, onDelete: 'CASCADE' },
    moderator_id: user(),
    claimed_at: now,
    expires_at: { type: DataTypes.DATE, allowNull: false },
  });
  await q.addIndex('review_claims', ['moderator_id']);

  // A moderator's judgement of one reading or clearance, as it was (its lock version) when checked.
  await q.createTable('evidence_checks', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    story_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'stories', key: 'id' }, onDelete: 'RESTRICT' },
    subject_type: { type: DataTypes.STRING(16), allowNull: false },
    subject_id: { type: DataTypes.INTEGER, allowNull: false },
    subject_lock_version: { type: DataTypes.INTEGER, allowNull: false },
    state: { type: DataTypes.STRING(16), allowNull: false },
    comment: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
    moderator_id: user(),
    resolved_at: { type: DataTypes.DATE, allowNull: true },
    created_at: now,
  });
  await q.addIndex('evidence_checks', ['subject_type', 'subject_id', 'id']);
  await q.addIndex('evidence_checks', ['story_id', 'id']);
  await q.addIndex('evidence_checks', ['moderator_id']);
  await sql(`ALTER TABLE evidence_checks ADD CONSTRAINT evidence_checks_subject_check CHECK (subject_type IN ('reading','clearance'))`);
  await sql(`ALTER TABLE evidence_checks ADD CONSTRAINT evidence_checks_state_check CHECK (state IN ('checked','flagged'))`);

  // The builder's answers to a flag, kept in order.
  await q.createTable('check_answers', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    check_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'evidence_checks', key: 'id' }, onDelete: 'RESTRICT' },
    body: { type: DataTypes.TEXT, allowNull: false },
    author_id: user(),
    created_at: now,
  });
  await q.addIndex('check_answers', ['check_id', 'id']);
  await q.addIndex('check_answers', ['author_id']);

  await q.createTable('audit_log', {
    id: { type: DataTypes.BIGINT, autoIncrement: true, primaryKey: true },
    at: now,
    actor_id: user(true),
    action: { type: DataTypes.STRING(40), allowNull: false },
    subject_type: { type: DataTypes.STRING(24), allowNull: false },
    subject_id: { type: DataTypes.INTEGER, allowNull: false },
    story_id: { type: DataTypes.INTEGER, allowNull: true },
    before: { type: DataTypes.JSONB, allowNull: true },
    after: { type: DataTypes.JSONB, allowNull: true },
    note: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
  });
  await q.addIndex('audit_log', ['story_id', 'id']);
  await q.addIndex('audit_log', ['subject_type', 'subject_id', 'id']);
  await q.addIndex('audit_log', ['actor_id']);
  // Never editable: the database itself refuses to change or remove a line.
  await sql(`CREATE FUNCTION audit_log_refuse_change() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN RAISE EXCEPTION 'audit_log is append-only'; END $$`);
  await sql(`CREATE TRIGGER audit_log_append_only BEFORE UPDATE OR DELETE ON audit_log
    FOR EACH ROW EXECUTE FUNCTION audit_log_refuse_change()`);
  await sql(`CREATE TRIGGER audit_log_no_truncate BEFORE TRUNCATE ON audit_log
    FOR EACH STATEMENT EXECUTE FUNCTION audit_log_refuse_change()`);

  await q.createTable('follows', {
    follower_id: { type: DataTypes.INTEGER, primaryKey: true, references: { model: 'users', key: 'id' }, onDelete: 'CASCADE' },
    builder_id: { type: DataTypes.INTEGER, primaryKey: true, references: { model: 'users', key: 'id' }, onDelete: 'CASCADE' },
    // Mail when this builder publishes; off after a one-click unsubscribe.
    email_on_publish: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
    created_at: now,
  });
  await q.addIndex('follows', ['builder_id', 'follower_id']);
  await sql(`ALTER TABLE follows ADD CONSTRAINT follows_not_self CHECK (follower_id <> builder_id)`);
}

export async function down({ context: q }: { context: QueryInterface }) {
  await q.dropTable('follows');
  await q.sequelize.query('DROP TRIGGER IF EXISTS audit_log_no_truncate ON audit_log');
  await q.sequelize.query('DROP TRIGGER IF EXISTS audit_log_append_only ON audit_log');
  await q.dropTable('audit_log');
  await q.sequelize.query('DROP FUNCTION IF EXISTS audit_log_refuse_change()');
  await q.dropTable('check_answers');
  await q.dropTable('evidence_checks');
  await q.dropTable('review_claims');
  await q.removeColumn('stories', 'withdrawn_by');
  await q.removeColumn('stories', 'withdrawn_reason');
  await q.removeColumn('stories', 'submitted_at');
  await q.removeColumn('stories', 'published_publication_id');
  await q.dropTable('story_publications');
}
