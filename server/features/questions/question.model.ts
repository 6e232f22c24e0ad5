import {
  DataTypes,
  Model,
  type CreationOptional,
  type ForeignKey,
  type InferAttributes,
  type InferCreationAttributes,
  type Sequelize,
} from 'sequelize';
import type { Story } from '../stories/story.model';
import type { User } from '../users/user.model';

/** A reader's question on a published story, with the builder's answer; plain text as typed. */
export class Question extends Model<InferAttributes<Question>, InferCreationAttributes<Question>> {
  declare id: CreationOptional<number>;
  declare storyId: ForeignKey<Story['id']>;
  declare authorId: ForeignKey<User['id']>;
  declare body: string;
  declare answerBody: CreationOptional<string | null>;
  declare answeredBy: CreationOptional<number | null>;
  declare answeredAt: CreationOptional<Date | null>;
  declare hiddenBy: CreationOptional<number | null>;
  declare hiddenAt: CreationOptional<Date | null>;
  declare hiddenReason: CreationOptional<string | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export function initQuestionModel(sequelize: Sequelize) {
  Question.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      body: { type: DataTypes.TEXT, allowNull: false },
      answerBody: { type: DataTypes.TEXT, allowNull: true },
      answeredBy: { type: DataTypes.INTEGER, allowNull: true },
      answeredAt: { type: DataTypes.DATE, allowNull: true },
      hiddenBy: { type: DataTypes.INTEGER, allowNull: true },
      hiddenAt: { type: DataTypes.DATE, allowNull: true },
      hiddenReason: { type: DataTypes.TEXT, allowNull: true },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'questions', modelName: 'Question' },
  );
}
