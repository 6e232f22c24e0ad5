import { DataTypes, type QueryInterface } from 'sequelize';

export async function up({ context: q }: { context: QueryInterface }) {
  const now = { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW };
  await q.createTable('builds', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    owner_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'users', key: 'id' }, onDelete: 'RESTRICT' },
    title: { type: DataTypes.STRING(160), allowNull: false },
    subject: { type: DataTypes.STRING(300), allowNull: false, defaultValue: '' },
    created_at: now,
    updated_at: now,
  });
  await q.addIndex('builds', ['owner_id', 'id']);

  await q.createTable('parts', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    build_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'builds', key: 'id' }, onDelete: 'CASCADE' },
    name: { type: DataTypes.STRING(120), allowNull: false },
    serial: { type: DataTypes.STRING(80), allowNull: false, defaultValue: '' },
    position: { type: DataTypes.INTEGER, allowNull: false },
    created_at: now,
    updated_at: now,
  });
  await q.addIndex('parts', ['build_id', 'position']);

  await q.createTable('clips', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    build_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'builds', key: 'id' }, onDelete: 'RESTRICT' },
    title: { type: DataTypes.STRING(160), allowNull: false },
    position: { type: DataTypes.INTEGER, allowNull: false },
    status: { type: DataTypes.STRING(16), allowNull: false, defaultValue: 'uploaded' },
    progress: { type: DataTypes.SMALLINT, allowNull: false, defaultValue: 0 },
    failure_reason: { type: DataTypes.TEXT, allowNull: true },
    original_name: { type: DataTypes.STRING(255), allowNull: false },
    size_bytes: { type: DataTypes.BIGINT, allowNull: false },
    container: { type: DataTypes.STRING(32), allowNull: false },
    // Generated folder name in storage; never derived from what the uploader called the file.
    storage_prefix: { type: DataTypes.STRING(64), allowNull: false, unique: true },
    probe: { type: DataTypes.JSONB, allowNull: true },
    web_copy: { type: DataTypes.STRING(16), allowNull: true },
    thumbnails: { type: DataTypes.JSONB, allowNull: true },
    // Trim points in whole milliseconds, exact; the original file is never cut.
    trim_in_ms: { type: DataTypes.INTEGER, allowNull: true },
    trim_out_ms: { type: DataTypes.INTEGER, allowNull: true },
    attempts: { type: DataTypes.SMALLINT, allowNull: false, defaultValue: 0 },
    created_at: now,
    updated_at: now,
  });
  await q.sequelize.query(
    `ALTER TABLE clips ADD CONSTRAINT clips_status_check CHECK (status IN ('uploaded','processing','ready','failed'))`,
  );
  await q.sequelize.query(
    `ALTER TABLE clips ADD CONSTRAINT clips_trim_check CHECK (trim_in_ms IS NULL OR trim_out_ms IS NULL OR trim_out_ms > trim_in_ms)`,
  );
  await q.addIndex('clips', ['build_id', 'position']);
  await q.addIndex('clips', ['status', 'updated_at']);

  await q.createTable('moments', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    clip_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'clips', key: 'id' }, onDelete: 'RESTRICT' },
    at_ms: { type: DataTypes.INTEGER, allowNull: false },
    label: { type: DataTypes.STRING(160), allowNull: false, defaultValue: '' },
    created_by: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'users', key: 'id' }, onDelete: 'RESTRICT' },
    created_at: now,
    updated_at: now,
  });
  await q.addIndex('moments', ['clip_id', 'at_ms']);
  await q.addIndex('moments', ['created_by']);
}

export async function down({ context: q }: { context: QueryInterface }) {
  await q.dropTable('moments');
  await q.dropTable('clips');
  await q.dropTable('parts');
  await q.dropTable('builds');
}
