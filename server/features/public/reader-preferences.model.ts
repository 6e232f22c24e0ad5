import { DataTypes, Model, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';
import type { UnitSystem } from '@shared/measure/format';

/**
 * A reader's preferences, kept on their `users` row. A model of its own (two columns of that
 * table) so the account model stays about sign-in and roles.
 */
export class ReaderPreferences extends Model<InferAttributes<ReaderPreferences>, InferCreationAttributes<ReaderPreferences>> {
  declare id: number;
  declare unitsPreference: UnitSystem | null;
  declare weeklyDigest: boolean;
}

export function initReaderPreferencesModel(sequelize: Sequelize) {
  ReaderPreferences.init(
    {
      id: { type: DataTypes.INTEGER, primaryKey: true },
      unitsPreference: { type: DataTypes.STRING(8), allowNull: true },
      weeklyDigest: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
    },
    { sequelize, tableName: 'users', modelName: 'ReaderPreferences', timestamps: false },
  );
}
