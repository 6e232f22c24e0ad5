import {
  DataTypes,
  Model,
  type CreationOptional,
  type InferAttributes,
  type InferCreationAttributes,
  type Sequelize,
} from 'sequelize';
import type { DefaultUnitSystem, TemperatureScale } from '@shared/measure/quantities';
import type { Role, User as UserDto } from '@shared/users/user.schema';

/** An account, created on first GitHub sign-in. */
export class User extends Model<InferAttributes<User>, InferCreationAttributes<User>> {
  declare id: CreationOptional<number>;
  declare githubId: string;
  declare login: string;
  declare displayName: string;
  declare email: string | null;
  declare avatarUrl: string | null;
  declare shop: CreationOptional<string | null>;
  declare bio: CreationOptional<string | null>;
  declare role: CreationOptional<Role>;
  declare isDemo: CreationOptional<boolean>;
  /** Default units for new figures; null = not chosen. */
  declare unitSystem: CreationOptional<DefaultUnitSystem | null>;
  declare temperatureScale: CreationOptional<TemperatureScale | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  /** The shape the API shows. */
  toDto(): UserDto {
    return {
      id: this.id,
      login: this.login,
      displayName: this.displayName,
      email: this.email,
      avatarUrl: this.avatarUrl,
      shop: this.shop ?? null,
      role: this.role,
      unitSystem: this.unitSystem ?? null,
      temperatureScale: this.temperatureScale ?? null,
      createdAt: this.createdAt.toISOString(),
    };
  }
}

export function initUserModel(sequelize: Sequelize) {
  User.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      githubId: { type: DataTypes.STRING(64), allowNull: false, unique: true },
      login: { type: DataTypes.STRING(64), allowNull: false, unique: true },
      displayName: { type: DataTypes.STRING(200), allowNull: false },
      email: { type: DataTypes.STRING(320), allowNull: true },
      avatarUrl: { type: DataTypes.STRING(500), allowNull: true },
      shop: { type: DataTypes.STRING(200), allowNull: true },
      bio: { type: DataTypes.TEXT, allowNull: true },
      role: { type: DataTypes.STRING(16), allowNull: false, defaultValue: 'follower' },
      isDemo: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
      unitSystem: { type: DataTypes.STRING(8), allowNull: true },
      temperatureScale: { type: DataTypes.STRING(4), allowNull: true },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'users', modelName: 'User' },
  );
}
