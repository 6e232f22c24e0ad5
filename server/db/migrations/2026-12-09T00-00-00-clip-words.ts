import { DataTypes, type QueryInterface } from 'sequelize';

/**
 * What the product heard in each clip: `clip_words` holds the words an offline recognizer found
 * in a clip's sound (milliseconds from the start, its confidence, the order heard), replaced as a
 * whole each time the clip is listened to; `clips.listening_state` says where listening stands
 * and `listened_at` when it last finished. Clips already there wait for their turn ('pending').
 */
export async function up({ context: q }: { context: QueryInterface }) {
  await q.addColumn('clips', 'listening_state', { type: DataTypes.STRING(16), allowNull: false, defaultValue: 'pending' });
  await q.addColumn('clips', 'listened_at', { type: DataTypes.DATE, allowNull: true });
  await q.sequelize.query(
    `ALTER TABLE clips ADD CONSTRAINT clips_listening_state_check
       CHECK (listening_state IN ('pending','listening','ready','failed','unavailable'))`,
  );
  await q.createTable('clip_words', {
    clip_id: { type: DataTypes.INTEGER, allowNull: false, primaryKey: true, references: { model: 'clips', key: 'id' }, onDelete: 'CASCADE' },
    // The order heard, from 0; with clip_id the key (whose index also serves the foreign key).
    position: { type: DataTypes.INTEGER, allowNull: false, primaryKey: true },
    start_ms: { type: DataTypes.INTEGER, allowNull: false },
    end_ms: { type: DataTypes.INTEGER, allowNull: false },
    // As the recognizer printed it ("hundred(4)", "<sil>"); readers are given it cleaned.
    word: { type: DataTypes.STRING(100), allowNull: false },
    // The recognizer's own score (pocketsphinx's posterior, sometimes a little over 1): not a measured value.
    confidence: { type: DataTypes.REAL, allowNull: false },
  });
  await q.sequelize.query(
    `ALTER TABLE clip_words ADD CONSTRAINT clip_words_times_check CHECK (start_ms >= 0 AND end_ms >= start_ms AND position >= 0)`,
  );
}

export async function down({ context: q }: { context: QueryInterface }) {
  await q.dropTable('clip_words');
  await q.sequelize.query('ALTER TABLE clips DROP CONSTRAINT IF EXISTS clips_listening_state_check');
  await q.removeColumn('clips', 'listened_at');
  await q.removeColumn('clips', 'listening_state');
}
