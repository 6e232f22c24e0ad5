import {
  DataTypes,
  Model,
  type CreationOptional,
  type ForeignKey,
  type InferAttributes,
  type InferCreationAttributes,
  type Sequelize,
} from 'sequelize';
import type { Clip } from '../clips/clip.model';
import type { User } from '../users/user.model';

/** The builder's words for a span of a clip's sound, in place of what the recognizer heard there. */
export class CaptionCorrection extends Model<InferAttributes<CaptionCorrection>, InferCreationAttributes<CaptionCorrection>> {
  declare id: CreationOptional<number>;
  declare clipId: ForeignKey<Clip['id']>;
  declare startMs: number;
  declare endMs: number;
  /** Empty: nothing was said in the span. */
  declare text: string;
  declare correctedBy: ForeignKey<User['id']>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

/** Initialises the caption corrections model (called from `initSpeechModels`). */
export function initCaptionCorrectionModel(sequelize: Sequelize) {
  CaptionCorrection.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      clipId: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'clips', key: 'id' } },
      startMs: { type: DataTypes.INTEGER, allowNull: false },
      endMs: { type: DataTypes.INTEGER, allowNull: false },
      text: { type: DataTypes.STRING(500), allowNull: false },
      correctedBy: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'users', key: 'id' } },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'caption_corrections', modelName: 'CaptionCorrection' },
  );
}
