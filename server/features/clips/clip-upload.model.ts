import {
  DataTypes,
  Model,
  type CreationOptional,
  type InferAttributes,
  type InferCreationAttributes,
  type Sequelize,
} from 'sequelize';
import type { Build } from '../builds/build.model';
import type { User } from '../users/user.model';
import type { Clip } from './clip.model';

/**
 * Where a resumable upload stands: `receiving` bytes, `finishing` (the last byte is in and the
 * file is being checked and filed), `done` (it became clip `clipId`).
 */
export type ClipUploadState = 'receiving' | 'finishing' | 'done';

/** A resumable (tus) upload of one file into a build; the bytes live in the upload store. */
export class ClipUpload extends Model<InferAttributes<ClipUpload>, InferCreationAttributes<ClipUpload>> {
  /** 32 hex digits: the last part of the upload's URL. */
  declare id: string;
  declare buildId: Build['id'];
  declare ownerId: User['id'];
  /** The name the file had on the builder's device (the clip's title comes from it). */
  declare fileName: string;
  /** BIGINT comes back from pg as a string. */
  declare sizeBytes: number | string;
  declare state: CreationOptional<ClipUploadState>;
  declare clipId: CreationOptional<Clip['id'] | null>;
  declare expiresAt: Date;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export function initClipUploadModel(sequelize: Sequelize) {
  ClipUpload.init(
    {
      id: { type: DataTypes.STRING(32), primaryKey: true },
      buildId: { type: DataTypes.INTEGER, allowNull: false },
      ownerId: { type: DataTypes.INTEGER, allowNull: false },
      fileName: { type: DataTypes.STRING(255), allowNull: false },
      sizeBytes: { type: DataTypes.BIGINT, allowNull: false },
      state: { type: DataTypes.STRING(16), allowNull: false, defaultValue: 'receiving' },
      clipId: { type: DataTypes.INTEGER, allowNull: true },
      expiresAt: { type: DataTypes.DATE, allowNull: false },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'clip_uploads', modelName: 'ClipUpload' },
  );
}
