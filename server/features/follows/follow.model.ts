import {
  DataTypes,
  Model,
  type CreationOptional,
  type InferAttributes,
  type InferCreationAttributes,
  type Sequelize,
} from 'sequelize';

/** A follower following a builder; mail on publish unless turned off. */
export class Follow extends Model<InferAttributes<Follow>, InferCreationAttributes<Follow>> {
  declare followerId: number;
  declare builderId: number;
  declare emailOnPublish: CreationOptional<boolean>;
  declare createdAt: CreationOptional<Date>;
}

export function initFollowModel(sequelize: Sequelize) {
  Follow.init(
    {
      followerId: { type: DataTypes.INTEGER, primaryKey: true },
      builderId: { type: DataTypes.INTEGER, primaryKey: true },
      emailOnPublish: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
      createdAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'follows', modelName: 'Follow', updatedAt: false },
  );
}
