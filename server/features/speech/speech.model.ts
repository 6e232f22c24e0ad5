import { DataTypes, Model, type ForeignKey, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';
import type { Clip } from '../clips/clip.model';

/** One word heard in a clip's sound, as the recognizer printed it. REAL comes back as a number. */
export class ClipWord extends Model<InferAttributes<ClipWord>, InferCreationAttributes<ClipWord>> {
  declare clipId: ForeignKey<Clip['id']>;
  /** The order heard, from 0. */
  declare position: number;
  declare startMs: number;
  declare endMs: number;
  declare word: string;
  declare confidence: number;
}

export function initSpeechModels(sequelize: Sequelize) {
  ClipWord.init(
    {
      clipId: { type: DataTypes.INTEGER, allowNull: false, primaryKey: true, references: { model: 'clips', key: 'id' } },
      position: { type: DataTypes.INTEGER, allowNull: false, primaryKey: true },
      startMs: { type: DataTypes.INTEGER, allowNull: false },
      endMs: { type: DataTypes.INTEGER, allowNull: false },
      word: { type: DataTypes.STRING(100), allowNull: false },
      confidence: { type: DataTypes.REAL, allowNull: false },
    },
    { sequelize, tableName: 'clip_words', modelName: 'ClipWord', timestamps: false },
  );
}
