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
import type { StoryState, StoryTags } from '@shared/stories/story.schema';
import type { Build } from '../builds/build.model';
import type { Moment } from '../clips/clip.model';
import type { User } from '../users/user.model';

/** A diary entry of a build. */
export class Story extends Model<InferAttributes<Story>, InferCreationAttributes<Story>> {
  declare id: CreationOptional<number>;
  declare buildId: ForeignKey<Build['id']>;
  declare title: string;
  declare summary: CreationOptional<string>;
  declare coverMomentId: ForeignKey<Moment['id']> | null;
  declare tags: CreationOptional<StoryTags>;
  declare workDate: CreationOptional<string | null>;
  declare body: CreationOptional<string>;
  declare state: CreationOptional<StoryState>;
  declare createdBy: ForeignKey<User['id']>;
  declare updatedBy: ForeignKey<User['id']>;
  declare lockVersion: CreationOptional<number>;
  /** The revision the public sees; null until first published. */
  declare publishedPublicationId: CreationOptional<number | null>;
  /** When it was last sent for review (the queue is oldest first). */
  declare submittedAt: CreationOptional<Date | null>;
  declare withdrawnReason: CreationOptional<string | null>;
  declare withdrawnBy: CreationOptional<number | null>;
  /** The moderator's reason when the story was last sent back for changes; null once sent again. */
  declare changesRequestedReason: CreationOptional<string | null>;
  declare changesRequestedBy: CreationOptional<number | null>;
  declare changesRequestedAt: CreationOptional<Date | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare build?: NonAttribute<Build>;
}

/** A kept state of a story. */
export class StoryRevision extends Model<InferAttributes<StoryRevision>, InferCreationAttributes<StoryRevision>> {
  declare id: CreationOptional<number>;
  declare storyId: ForeignKey<Story['id']>;
  declare number: number;
  declare title: string;
  declare summary: string;
  declare coverMomentId: number | null;
  declare tags: StoryTags;
  declare workDate: string | null;
  declare body: string;
  declare reason: 'autosave' | 'kept';
  declare savedBy: ForeignKey<User['id']>;
  declare createdAt: CreationOptional<Date>;
}

/** An image uploaded into a story (checked by its bytes; stored under a generated key). */
export class StoryImage extends Model<InferAttributes<StoryImage>, InferCreationAttributes<StoryImage>> {
  declare id: CreationOptional<number>;
  declare storyId: ForeignKey<Story['id']>;
  declare storageKey: string;
  declare contentType: string;
  declare sizeBytes: number;
  declare width: number | null;
  declare height: number | null;
  declare originalName: string;
  declare alt: CreationOptional<string>;
  declare createdBy: ForeignKey<User['id']>;
  declare createdAt: CreationOptional<Date>;
}

export function initStoryModels(sequelize: Sequelize) {
  Story.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      title: { type: DataTypes.STRING(160), allowNull: false },
      summary: { type: DataTypes.STRING(500), allowNull: false, defaultValue: '' },
      coverMomentId: { type: DataTypes.INTEGER, allowNull: true },
      tags: { type: DataTypes.JSONB, allowNull: false, defaultValue: { machine: [], component: [], operation: [] } },
      workDate: { type: DataTypes.DATEONLY, allowNull: true },
      body: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      state: { type: DataTypes.STRING(24), allowNull: false, defaultValue: 'draft' },
      lockVersion: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
      publishedPublicationId: { type: DataTypes.INTEGER, allowNull: true },
      submittedAt: { type: DataTypes.DATE, allowNull: true },
      withdrawnReason: { type: DataTypes.TEXT, allowNull: true },
      withdrawnBy: { type: DataTypes.INTEGER, allowNull: true },
      changesRequestedReason: { type: DataTypes.TEXT, allowNull: true },
      changesRequestedBy: { type: DataTypes.INTEGER, allowNull: true },
      changesRequestedAt: { type: DataTypes.DATE, allowNull: true },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'stories', modelName: 'Story' },
  );
  StoryRevision.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      number: { type: DataTypes.INTEGER, allowNull: false },
      title: { type: DataTypes.STRING(160), allowNull: false },
      summary: { type: DataTypes.STRING(500), allowNull: false },
      coverMomentId: { type: DataTypes.INTEGER, allowNull: true },
      tags: { type: DataTypes.JSONB, allowNull: false },
      workDate: { type: DataTypes.DATEONLY, allowNull: true },
      body: { type: DataTypes.TEXT, allowNull: false },
      reason: { type: DataTypes.STRING(16), allowNull: false },
      createdAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'story_revisions', modelName: 'StoryRevision', updatedAt: false },
  );
  StoryImage.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      storageKey: { type: DataTypes.STRING(120), allowNull: false, unique: true },
      contentType: { type: DataTypes.STRING(32), allowNull: false },
      sizeBytes: { type: DataTypes.INTEGER, allowNull: false },
      width: { type: DataTypes.INTEGER, allowNull: true },
      height: { type: DataTypes.INTEGER, allowNull: true },
      originalName: { type: DataTypes.STRING(255), allowNull: false },
      alt: { type: DataTypes.STRING(300), allowNull: false, defaultValue: '' },
      createdAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'story_images', modelName: 'StoryImage', updatedAt: false },
  );
}
