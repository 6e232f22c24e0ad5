import {
  DataTypes,
  Model,
  type CreationOptional,
  type ForeignKey,
  type InferAttributes,
  type InferCreationAttributes,
  type Sequelize,
} from 'sequelize';
import type { StoryTags } from '@shared/stories/story.schema';
import type { Story } from '../stories/story.model';
import type { User } from '../users/user.model';

/** A story as published: text and the figures of every claim as judged then. Never changed. */
export class StoryPublication extends Model<InferAttributes<StoryPublication>, InferCreationAttributes<StoryPublication>> {
  declare id: CreationOptional<number>;
  declare storyId: ForeignKey<Story['id']>;
  declare number: number;
  declare title: string;
  declare summary: string;
  declare coverMomentId: number | null;
  declare tags: StoryTags;
  declare workDate: string | null;
  declare body: string;
  declare evidence: Record<string, unknown>;
  declare publishedBy: ForeignKey<User['id']>;
  declare publishedAt: CreationOptional<Date>;
}

/** A moderator's hold on a story in review, so two do not check the same one. */
export class ReviewClaim extends Model<InferAttributes<ReviewClaim>, InferCreationAttributes<ReviewClaim>> {
  declare storyId: number;
  declare moderatorId: ForeignKey<User['id']>;
  declare claimedAt: CreationOptional<Date>;
  declare expiresAt: Date;
}

/** A moderator's judgement of a reading or clearance at one of its versions. */
export class EvidenceCheck extends Model<InferAttributes<EvidenceCheck>, InferCreationAttributes<EvidenceCheck>> {
  declare id: CreationOptional<number>;
  declare storyId: ForeignKey<Story['id']>;
  declare subjectType: 'reading' | 'clearance';
  declare subjectId: number;
  declare subjectLockVersion: number;
  declare state: 'checked' | 'flagged';
  declare comment: CreationOptional<string>;
  declare moderatorId: ForeignKey<User['id']>;
  declare resolvedAt: CreationOptional<Date | null>;
  declare createdAt: CreationOptional<Date>;
}

/** The builder's answer to a flag. */
export class CheckAnswer extends Model<InferAttributes<CheckAnswer>, InferCreationAttributes<CheckAnswer>> {
  declare id: CreationOptional<number>;
  declare checkId: ForeignKey<EvidenceCheck['id']>;
  declare body: string;
  declare authorId: ForeignKey<User['id']>;
  declare createdAt: CreationOptional<Date>;
}

export function initReviewModels(sequelize: Sequelize) {
  StoryPublication.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      number: { type: DataTypes.INTEGER, allowNull: false },
      title: { type: DataTypes.STRING(160), allowNull: false },
      summary: { type: DataTypes.STRING(500), allowNull: false },
      coverMomentId: { type: DataTypes.INTEGER, allowNull: true },
      tags: { type: DataTypes.JSONB, allowNull: false },
      workDate: { type: DataTypes.DATEONLY, allowNull: true },
      body: { type: DataTypes.TEXT, allowNull: false },
      evidence: { type: DataTypes.JSONB, allowNull: false },
      publishedAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
    },
    { sequelize, tableName: 'story_publications', modelName: 'StoryPublication', timestamps: false },
  );
  ReviewClaim.init(
    {
      storyId: { type: DataTypes.INTEGER, primaryKey: true },
      claimedAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
      expiresAt: { type: DataTypes.DATE, allowNull: false },
    },
    { sequelize, tableName: 'review_claims', modelName: 'ReviewClaim', timestamps: false },
  );
  EvidenceCheck.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      // Declared here: no association from checks to stories defines the column.
      storyId: { type: DataTypes.INTEGER, allowNull: false },
      subjectType: { type: DataTypes.STRING(16), allowNull: false },
      subjectId: { type: DataTypes.INTEGER, allowNull: false },
      subjectLockVersion: { type: DataTypes.INTEGER, allowNull: false },
      state: { type: DataTypes.STRING(16), allowNull: false },
      comment: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      resolvedAt: { type: DataTypes.DATE, allowNull: true },
      createdAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'evidence_checks', modelName: 'EvidenceCheck', updatedAt: false },
  );
  CheckAnswer.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      body: { type: DataTypes.TEXT, allowNull: false },
      createdAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'check_answers', modelName: 'CheckAnswer', updatedAt: false },
  );
}
