import { DataTypes, type QueryInterface } from 'sequelize';

/**
 * Authoring: instruments and their zero checks, the spec library (specs and immutable
 * versions), readings at moments (with history), clearances (signed terms over readings), and
 * diary entries (stories) with revisions and images.
 *
 * Measured figures are NUMERIC without a scale, so PostgreSQL keeps the digits as entered
 * ("0.5640" stays 0.5640). `lock_version` is the optimistic lock that two tabs compare.
 */
export async function up({ context: q }: { context: QueryInterface }) {
  const now = { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW };
  const user = (allowNull = false) => ({
    type: DataTypes.INTEGER,
    allowNull,
    references: { model: 'users', key: 'id' },
    onDelete: 'RESTRICT',
  });
  const lockVersion = { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 };
  const check = (sql: string) => q.sequelize.query(sql);

  await q.createTable('instruments', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    owner_id: user(),
    name: { type: DataTypes.STRING(120), allowNull: false },
    kind: { type: DataTypes.STRING(32), allowNull: false },
    serial: { type: DataTypes.STRING(80), allowNull: false, defaultValue: '' },
    unit: { type: DataTypes.STRING(8), allowNull: false },
    resolution: { type: DataTypes.DECIMAL, allowNull: false },
    // Stated standard uncertainty (a calibration certificate's or the maker's figure); null = from resolution only.
    stated_uncertainty: { type: DataTypes.DECIMAL, allowNull: true },
    calibration_interval_days: { type: DataTypes.INTEGER, allowNull: true },
    last_calibrated_on: { type: DataTypes.DATEONLY, allowNull: true },
    calibrated_by: { type: DataTypes.STRING(160), allowNull: false, defaultValue: '' },
    note: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
    retired: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
    lock_version: lockVersion,
    created_at: now,
    updated_at: now,
  });
  await q.addIndex('instruments', ['owner_id', 'id']);
  await check(`ALTER TABLE instruments ADD CONSTRAINT instruments_resolution_check CHECK (resolution > 0)`);
  await check(`ALTER TABLE instruments ADD CONSTRAINT instruments_uncertainty_check CHECK (stated_uncertainty IS NULL OR stated_uncertainty >= 0)`);

  await q.createTable('zero_checks', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    instrument_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'instruments', key: 'id' }, onDelete: 'RESTRICT' },
    checked_on: { type: DataTypes.DATEONLY, allowNull: false },
    unit: { type: DataTypes.STRING(8), allowNull: false },
    // The setting standard's size (0 for a micrometer closed on its anvil) and what the instrument showed on it.
    standard_size: { type: DataTypes.DECIMAL, allowNull: false },
    shown: { type: DataTypes.DECIMAL, allowNull: false },
    moment_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'moments', key: 'id' }, onDelete: 'RESTRICT' },
    note: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
    created_by: user(),
    created_at: now,
    updated_at: now,
  });
  await q.addIndex('zero_checks', ['instrument_id', 'checked_on']);
  await q.addIndex('zero_checks', ['moment_id']);
  await q.addIndex('zero_checks', ['created_by']);

  await q.createTable('specs', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    owner_id: user(),
    name: { type: DataTypes.STRING(160), allowNull: false },
    // What it applies to, free text ("Vellum 1100 oil pump"), for searching the library.
    applies_to: { type: DataTypes.STRING(200), allowNull: false, defaultValue: '' },
    shared: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
    lock_version: lockVersion,
    created_at: now,
    updated_at: now,
  });
  await q.addIndex('specs', ['owner_id', 'id']);
  await q.addIndex('specs', ['shared', 'id']);

  // Versions are written once and never changed: a verdict names the version it was judged on.
  await q.createTable('spec_versions', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    spec_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'specs', key: 'id' }, onDelete: 'RESTRICT' },
    version: { type: DataTypes.INTEGER, allowNull: false },
    unit: { type: DataTypes.STRING(8), allowNull: false },
    min_value: { type: DataTypes.DECIMAL, allowNull: true },
    max_value: { type: DataTypes.DECIMAL, allowNull: true },
    preferred_min: { type: DataTypes.DECIMAL, allowNull: true },
    preferred_max: { type: DataTypes.DECIMAL, allowNull: true },
    reject_limit: { type: DataTypes.DECIMAL, allowNull: true },
    rule: { type: DataTypes.STRING(16), allowNull: false },
    source_kind: { type: DataTypes.STRING(24), allowNull: false },
    source_text: { type: DataTypes.STRING(500), allowNull: false },
    note: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
    created_by: user(),
    created_at: now,
  });
  await q.addIndex('spec_versions', ['spec_id', 'version'], { unique: true });
  await q.addIndex('spec_versions', ['created_by']);
  await check(`ALTER TABLE spec_versions ADD CONSTRAINT spec_versions_band_check CHECK (min_value IS NOT NULL OR max_value IS NOT NULL)`);

  await q.createTable('readings', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    build_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'builds', key: 'id' }, onDelete: 'RESTRICT' },
    moment_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'moments', key: 'id' }, onDelete: 'RESTRICT' },
    instrument_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'instruments', key: 'id' }, onDelete: 'RESTRICT' },
    part_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'parts', key: 'id' }, onDelete: 'RESTRICT' },
    // The name claims and clearances use: `[…](reading:bore-depth)`. Unique within the build.
    key: { type: DataTypes.STRING(40), allowNull: false },
    name: { type: DataTypes.STRING(120), allowNull: false },
    kind: { type: DataTypes.STRING(16), allowNull: false },
    unit: { type: DataTypes.STRING(8), allowNull: false },
    value: { type: DataTypes.DECIMAL, allowNull: true },
    passes: { type: DataTypes.DECIMAL, allowNull: true },
    stops: { type: DataTypes.DECIMAL, allowNull: true },
    repeated_values: { type: DataTypes.ARRAY(DataTypes.DECIMAL), allowNull: true },
    // The texts exactly as typed ("0.5642\"", "3.5 thou"), beside the parsed figures.
    entered: { type: DataTypes.JSONB, allowNull: false },
    temperature_c: { type: DataTypes.DECIMAL, allowNull: true },
    material: { type: DataTypes.STRING(40), allowNull: true },
    note: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
    taken_on: { type: DataTypes.DATEONLY, allowNull: false },
    // Filled in by review (checked / flagged); every reading starts unchecked.
    review_state: { type: DataTypes.STRING(16), allowNull: false, defaultValue: 'unchecked' },
    created_by: user(),
    updated_by: user(),
    lock_version: lockVersion,
    created_at: now,
    updated_at: now,
  });
  await q.addIndex('readings', ['build_id', 'key'], { unique: true });
  await q.addIndex('readings', ['moment_id']);
  await q.addIndex('readings', ['instrument_id', 'taken_on']);
  await q.addIndex('readings', ['part_id']);
  await q.addIndex('readings', ['created_by']);
  await q.addIndex('readings', ['updated_by']);
  await check(`ALTER TABLE readings ADD CONSTRAINT readings_kind_check CHECK (
    (kind = 'direct' AND value IS NOT NULL AND passes IS NULL AND stops IS NULL AND repeated_values IS NULL) OR
    (kind = 'bracket' AND value IS NULL AND passes IS NOT NULL AND stops > passes AND passes >= 0 AND repeated_values IS NULL) OR
    (kind = 'repeated' AND value IS NULL AND passes IS NULL AND stops IS NULL AND cardinality(repeated_values) >= 2)
  )`);
  await check(`ALTER TABLE readings ADD CONSTRAINT readings_review_state_check CHECK (review_state IN ('unchecked','checked','flagged'))`);

  // Every saved edit keeps the reading as it was before, with who changed it and when.
  await q.createTable('reading_revisions', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    reading_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'readings', key: 'id' }, onDelete: 'CASCADE' },
    lock_version: { type: DataTypes.INTEGER, allowNull: false },
    snapshot: { type: DataTypes.JSONB, allowNull: false },
    changed_by: user(),
    created_at: now,
  });
  await q.addIndex('reading_revisions', ['reading_id', 'lock_version']);
  await q.addIndex('reading_revisions', ['changed_by']);

  await q.createTable('clearances', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    build_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'builds', key: 'id' }, onDelete: 'RESTRICT' },
    key: { type: DataTypes.STRING(40), allowNull: false },
    name: { type: DataTypes.STRING(120), allowNull: false },
    template: { type: DataTypes.STRING(32), allowNull: true },
    spec_version_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'spec_versions', key: 'id' }, onDelete: 'RESTRICT' },
    coverage_factor: { type: DataTypes.DECIMAL, allowNull: false, defaultValue: 2 },
    note: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
    review_state: { type: DataTypes.STRING(16), allowNull: false, defaultValue: 'unchecked' },
    created_by: user(),
    lock_version: lockVersion,
    created_at: now,
    updated_at: now,
  });
  await q.addIndex('clearances', ['build_id', 'key'], { unique: true });
  await q.addIndex('clearances', ['spec_version_id']);
  await q.addIndex('clearances', ['created_by']);
  await check(`ALTER TABLE clearances ADD CONSTRAINT clearances_review_state_check CHECK (review_state IN ('unchecked','checked','flagged'))`);

  await q.createTable('clearance_terms', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    clearance_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'clearances', key: 'id' }, onDelete: 'CASCADE' },
    reading_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'readings', key: 'id' }, onDelete: 'RESTRICT' },
    sign: { type: DataTypes.SMALLINT, allowNull: false },
    position: { type: DataTypes.INTEGER, allowNull: false },
  });
  // GUM eq. (10) assumes uncorrelated inputs: a reading appears once in a clearance.
  await q.addIndex('clearance_terms', ['clearance_id', 'reading_id'], { unique: true });
  await q.addIndex('clearance_terms', ['reading_id']);
  await check(`ALTER TABLE clearance_terms ADD CONSTRAINT clearance_terms_sign_check CHECK (sign IN (1, -1))`);

  await q.createTable('stories', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    build_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'builds', key: 'id' }, onDelete: 'RESTRICT' },
    title: { type: DataTypes.STRING(160), allowNull: false },
    summary: { type: DataTypes.STRING(500), allowNull: false, defaultValue: '' },
    cover_moment_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'moments', key: 'id' }, onDelete: 'SET NULL' },
    tags: { type: DataTypes.JSONB, allowNull: false, defaultValue: { machine: [], component: [], operation: [] } },
    work_date: { type: DataTypes.DATEONLY, allowNull: true },
    body: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
    state: { type: DataTypes.STRING(24), allowNull: false, defaultValue: 'draft' },
    created_by: user(),
    updated_by: user(),
    lock_version: lockVersion,
    created_at: now,
    updated_at: now,
  });
  await q.addIndex('stories', ['build_id', 'id']);
  await q.addIndex('stories', ['state', 'id']);
  await q.addIndex('stories', ['cover_moment_id']);
  await q.addIndex('stories', ['created_by']);
  await q.addIndex('stories', ['updated_by']);
  await check(`ALTER TABLE stories ADD CONSTRAINT stories_state_check CHECK (state IN ('draft','in-review','changes-requested','published','withdrawn'))`);

  await q.createTable('story_revisions', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    story_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'stories', key: 'id' }, onDelete: 'CASCADE' },
    number: { type: DataTypes.INTEGER, allowNull: false },
    title: { type: DataTypes.STRING(160), allowNull: false },
    summary: { type: DataTypes.STRING(500), allowNull: false },
    cover_moment_id: { type: DataTypes.INTEGER, allowNull: true },
    tags: { type: DataTypes.JSONB, allowNull: false },
    work_date: { type: DataTypes.DATEONLY, allowNull: true },
    body: { type: DataTypes.TEXT, allowNull: false },
    // 'autosave' (made by the editor every few minutes of typing) or 'kept' (the writer asked for it).
    reason: { type: DataTypes.STRING(16), allowNull: false },
    saved_by: user(),
    created_at: now,
  });
  await q.addIndex('story_revisions', ['story_id', 'number'], { unique: true });
  await q.addIndex('story_revisions', ['saved_by']);

  await q.createTable('story_images', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    story_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'stories', key: 'id' }, onDelete: 'RESTRICT' },
    storage_key: { type: DataTypes.STRING(120), allowNull: false, unique: true },
    content_type: { type: DataTypes.STRING(32), allowNull: false },
    size_bytes: { type: DataTypes.INTEGER, allowNull: false },
    width: { type: DataTypes.INTEGER, allowNull: true },
    height: { type: DataTypes.INTEGER, allowNull: true },
    original_name: { type: DataTypes.STRING(255), allowNull: false },
    alt: { type: DataTypes.STRING(300), allowNull: false, defaultValue: '' },
    created_by: user(),
    created_at: now,
  });
  await q.addIndex('story_images', ['story_id']);
  await q.addIndex('story_images', ['created_by']);
}

export async function down({ context: q }: { context: QueryInterface }) {
  for (const table of [
    'story_images',
    'story_revisions',
    'stories',
    'clearance_terms',
    'clearances',
    'reading_revisions',
    'readings',
    'spec_versions',
    'specs',
    'zero_checks',
    'instruments',
  ]) {
    await q.dropTable(table);
  }
}
