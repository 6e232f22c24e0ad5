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
}
