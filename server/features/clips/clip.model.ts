import {
  DataTypes,
  Model,
  type CreationOptional,
  type ForeignKey,
  type InferAttributes,
  type InferCreationAttributes,
  type NonAttribute,
  type Sequelize,
} from 'sequelize';
import type { ClipProbe, ClipStatus } from '@shared/clips/clip.schema';
import type { z } from 'zod';
import type { thumbnailStripSchema, webCopyKindSchema } from '@shared/clips/clip.schema';
import type { Build } from '../builds/build.model';
import type { User } from '../users/user.model';
import { initClipUploadModel } from './clip-upload.model';

/** One uploaded video segment of a build. */
export class Clip extends Model<InferAttributes<Clip>, InferCreationAttributes<Clip>> {
  declare id: CreationOptional<number>;
  declare buildId: ForeignKey<Build['id']>;
  declare title: string;
  declare position: number;
  declare status: CreationOptional<ClipStatus>;
  declare progress: CreationOptional<number>;
  declare failureReason: CreationOptional<string | null>;
  declare originalName: string;
  /** BIGINT comes back from pg as a string. */
  declare sizeBytes: number | string;
  declare container: string;
  declare storagePrefix: string;
  declare probe: CreationOptional<ClipProbe | null>;
  declare webCopy: CreationOptional<z.infer<typeof webCopyKindSchema> | null>;
  declare thumbnails: CreationOptional<z.infer<typeof thumbnailStripSchema> | null>;
  declare trimInMs: CreationOptional<number | null>;
  declare trimOutMs: CreationOptional<number | null>;
  declare attempts: CreationOptional<number>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare build?: NonAttribute<Build>;
}

/** A time marked in a clip, where a reading is taken. */
export class Moment extends Model<InferAttributes<Moment>, InferCreationAttributes<Moment>> {
  declare id: CreationOptional<number>;
  declare clipId: ForeignKey<Clip['id']>;
  declare atMs: number;
  declare label: string;
  declare createdBy: ForeignKey<User['id']>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export function initClipModels(sequelize: Sequelize) {
  Clip.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      title: { type: DataTypes.STRING(160), allowNull: false },
      position: { type: DataTypes.INTEGER, allowNull: false },
      status: { type: DataTypes.STRING(16), allowNull: false, defaultValue: 'uploaded' },
      progress: { type: DataTypes.SMALLINT, allowNull: false, defaultValue: 0 },
      failureReason: { type: DataTypes.TEXT, allowNull: true },
      originalName: { type: DataTypes.STRING(255), allowNull: false },
      sizeBytes: { type: DataTypes.BIGINT, allowNull: false },
      container: { type: DataTypes.STRING(32), allowNull: false },
      storagePrefix: { type: DataTypes.STRING(64), allowNull: false, unique: true },
      probe: { type: DataTypes.JSONB, allowNull: true },
      webCopy: { type: DataTypes.STRING(16), allowNull: true },
      thumbnails: { type: DataTypes.JSONB, allowNull: true },
      trimInMs: { type: DataTypes.INTEGER, allowNull: true },
      trimOutMs: { type: DataTypes.INTEGER, allowNull: true },
      attempts: { type: DataTypes.SMALLINT, allowNull: false, defaultValue: 0 },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'clips', modelName: 'Clip' },
  );
  Moment.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      atMs: { type: DataTypes.INTEGER, allowNull: false },
      label: { type: DataTypes.STRING(160), allowNull: false, defaultValue: '' },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'moments', modelName: 'Moment' },
  );
  initClipUploadModel(sequelize);
}
