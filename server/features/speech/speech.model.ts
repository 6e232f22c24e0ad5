import {
  DataTypes,
  Model,
  type CreationOptional,
  type ForeignKey,
  type InferAttributes,
  type InferCreationAttributes,
  type Sequelize,
} from 'sequelize';
import type { AnyUnit } from '@shared/measure/quantities';
import type { Clip } from '../clips/clip.model';
import type { User } from '../users/user.model';
import { initCaptionCorrectionModel } from './corrections.model';

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

/** A proposed reading its builder set aside (`proposalId` as the proposals route names it). */
export class ProposalDismissal extends Model<InferAttributes<ProposalDismissal>, InferCreationAttributes<ProposalDismissal>> {
  declare clipId: ForeignKey<Clip['id']>;
  declare proposalId: string;
  declare dismissedBy: ForeignKey<User['id']>;
  declare createdAt: CreationOptional<Date>;
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
  ProposalDismissal.init(
    {
      clipId: { type: DataTypes.INTEGER, allowNull: false, primaryKey: true, references: { model: 'clips', key: 'id' } },
      proposalId: { type: DataTypes.TEXT, allowNull: false, primaryKey: true },
      dismissedBy: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'users', key: 'id' } },
      createdAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'proposal_dismissals', modelName: 'ProposalDismissal', updatedAt: false },
  );
  initDisplayModels(sequelize);
  initCaptionCorrectionModel(sequelize);
}

/** The region of a clip's picture its builder drew over an instrument's display, and where reading it stands. */
export class DisplayRegionRow extends Model<InferAttributes<DisplayRegionRow>, InferCreationAttributes<DisplayRegionRow>> {
  declare clipId: ForeignKey<Clip['id']>;
  declare x: number;
  declare y: number;
  declare width: number;
  declare height: number;
  /** The unit the display shows its figures in. */
  declare unit: AnyUnit;
  /** pending → reading → ready | failed; unavailable when no display reader is installed. */
  declare state: CreationOptional<'pending' | 'reading' | 'ready' | 'failed' | 'unavailable'>;
  declare setBy: ForeignKey<User['id']>;
  declare setAt: CreationOptional<Date>;
  declare readAt: CreationOptional<Date | null>;
}

/** One value read off a clip's display: still frames from `startMs` to `endMs` that read `text`. */
export class DisplayValue extends Model<InferAttributes<DisplayValue>, InferCreationAttributes<DisplayValue>> {
  declare clipId: ForeignKey<Clip['id']>;
  declare position: number;
  declare startMs: number;
  declare endMs: number;
  declare text: string;
  declare confidence: number;
}

function initDisplayModels(sequelize: Sequelize) {
  DisplayRegionRow.init(
    {
      clipId: { type: DataTypes.INTEGER, allowNull: false, primaryKey: true, references: { model: 'clips', key: 'id' } },
      x: { type: DataTypes.DOUBLE, allowNull: false },
      y: { type: DataTypes.DOUBLE, allowNull: false },
      width: { type: DataTypes.DOUBLE, allowNull: false },
      height: { type: DataTypes.DOUBLE, allowNull: false },
      unit: { type: DataTypes.TEXT, allowNull: false },
      state: { type: DataTypes.TEXT, allowNull: false, defaultValue: 'pending' },
      setBy: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'users', key: 'id' } },
      setAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
      readAt: { type: DataTypes.DATE, allowNull: true },
    },
    { sequelize, tableName: 'clip_display_regions', modelName: 'DisplayRegionRow', timestamps: false },
  );
  DisplayValue.init(
    {
      clipId: { type: DataTypes.INTEGER, allowNull: false, primaryKey: true, references: { model: 'clips', key: 'id' } },
      position: { type: DataTypes.INTEGER, allowNull: false, primaryKey: true },
      startMs: { type: DataTypes.INTEGER, allowNull: false },
      endMs: { type: DataTypes.INTEGER, allowNull: false },
      text: { type: DataTypes.STRING(40), allowNull: false },
      confidence: { type: DataTypes.REAL, allowNull: false },
    },
    { sequelize, tableName: 'clip_display_values', modelName: 'DisplayValue', timestamps: false },
  );
}
