import { DataTypes, type QueryInterface } from 'sequelize';

/**
 * Reading an instrument's display in a clip's picture: the region its builder drew over the
 * display (fractions of the frame from its top left, one per clip), where reading it stands, and
 * the values read (each a run of still frames that read the same, with its times). Suggestions
 * from a display are worked out from `clip_display_values` on each request, as speech ones are
 * from `clip_words`; a dismissed one is named "d<atMs>-<n>".
 */
export async function up({ context: q }: { context: QueryInterface }) {
  await q.createTable('clip_display_regions', {
    clip_id: { type: DataTypes.INTEGER, allowNull: false, primaryKey: true, references: { model: 'clips', key: 'id' }, onDelete: 'CASCADE' },
    x: { type: DataTypes.DOUBLE, allowNull: false },
    y: { type: DataTypes.DOUBLE, allowNull: false },
    width: { type: DataTypes.DOUBLE, allowNull: false },
    height: { type: DataTypes.DOUBLE, allowNull: false },
    // The unit the display shows its figures in (a display shows digits, not the unit).
    unit: { type: DataTypes.TEXT, allowNull: false },
    state: { type: DataTypes.TEXT, allowNull: false, defaultValue: 'pending' },
    set_by: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'users', key: 'id' }, onDelete: 'RESTRICT' },
    set_at: { type: DataTypes.DATE, allowNull: false, defaultValue: q.sequelize.fn('now') },
    read_at: { type: DataTypes.DATE, allowNull: true },
  });
  await q.sequelize.query(`
    ALTER TABLE clip_display_regions
      ADD CONSTRAINT clip_display_regions_state_check CHECK (state IN ('pending', 'reading', 'ready', 'failed', 'unavailable')),
      ADD CONSTRAINT clip_display_regions_frame_check CHECK (
        x >= 0 AND y >= 0 AND width > 0 AND height > 0 AND x + width <= 1.000000001 AND y + height <= 1.000000001)`);
  await q.addIndex('clip_display_regions', ['set_by']);

  await q.createTable('clip_display_values', {
    clip_id: { type: DataTypes.INTEGER, allowNull: false, primaryKey: true, references: { model: 'clips', key: 'id' }, onDelete: 'CASCADE' },
    position: { type: DataTypes.INTEGER, allowNull: false, primaryKey: true },
    start_ms: { type: DataTypes.INTEGER, allowNull: false },
    end_ms: { type: DataTypes.INTEGER, allowNull: false },
    text: { type: DataTypes.STRING(40), allowNull: false },
    confidence: { type: DataTypes.REAL, allowNull: false },
  });

  await q.sequelize.query(`ALTER TABLE proposal_dismissals DROP CONSTRAINT proposal_dismissals_id_check`);
  await q.sequelize.query(
    `ALTER TABLE proposal_dismissals ADD CONSTRAINT proposal_dismissals_id_check CHECK (proposal_id ~ '^d?[0-9]{1,10}-[0-9]{1,4}$')`,
  );
}

export async function down({ context: q }: { context: QueryInterface }) {
  await q.sequelize.query(`DELETE FROM proposal_dismissals WHERE proposal_id LIKE 'd%'`);
  await q.sequelize.query(`ALTER TABLE proposal_dismissals DROP CONSTRAINT proposal_dismissals_id_check`);
  await q.sequelize.query(
    `ALTER TABLE proposal_dismissals ADD CONSTRAINT proposal_dismissals_id_check CHECK (proposal_id ~ '^[0-9]{1,10}-[0-9]{1,4}$')`,
  );
  await q.dropTable('clip_display_values');
  await q.dropTable('clip_display_regions');
}
