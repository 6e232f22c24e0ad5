import { DataTypes, type QueryInterface } from 'sequelize';

/**
 * The builder's corrections to a clip's captions: for a span of the clip (milliseconds from its
 * start), the words said there, which take the place of the words heard in it wherever the
 * clip's words are read. Empty text says nothing was said there. Kept apart from `clip_words`,
 * which is replaced whenever the clip is listened to again, so corrections outlive a new run.
 * A new correction replaces those it overlaps (in the service), so a clip's spans do not overlap.
 */
export async function up({ context: q }: { context: QueryInterface }) {
  await q.createTable('caption_corrections', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
    clip_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'clips', key: 'id' }, onDelete: 'CASCADE' },
    start_ms: { type: DataTypes.INTEGER, allowNull: false },
    end_ms: { type: DataTypes.INTEGER, allowNull: false },
    text: { type: DataTypes.STRING(500), allowNull: false },
    corrected_by: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'users', key: 'id' }, onDelete: 'RESTRICT' },
    created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: q.sequelize.fn('now') },
    updated_at: { type: DataTypes.DATE, allowNull: false, defaultValue: q.sequelize.fn('now') },
  });
  await q.sequelize.query(
    `ALTER TABLE caption_corrections ADD CONSTRAINT caption_corrections_span_check CHECK (start_ms >= 0 AND end_ms >= start_ms)`,
  );
  // The clip's corrections are always read together, in time order.
  await q.addIndex('caption_corrections', ['clip_id', 'start_ms']);
  await q.addIndex('caption_corrections', ['corrected_by']);
}

export async function down({ context: q }: { context: QueryInterface }) {
  await q.dropTable('caption_corrections');
}
