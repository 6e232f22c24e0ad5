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
import type { DecisionRule } from '@shared/measure/spec';
import type { SpecSourceKind } from '@shared/measure/spec.schema';
import type { AnyUnit } from '@shared/measure/quantities';
import type { User } from '../users/user.model';

/** A spec in the library: its name and who keeps it; the figures are in its versions. */
export class Spec extends Model<InferAttributes<Spec>, InferCreationAttributes<Spec>> {
  declare id: CreationOptional<number>;
  declare ownerId: ForeignKey<User['id']>;
  declare name: string;
  declare appliesTo: CreationOptional<string>;
  declare shared: CreationOptional<boolean>;
  declare lockVersion: CreationOptional<number>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare versions?: NonAttribute<SpecVersion[]>;
  declare owner?: NonAttribute<User>;
}

/** One version of a spec's figures, written once and never changed. */
export class SpecVersion extends Model<InferAttributes<SpecVersion>, InferCreationAttributes<SpecVersion>> {
  declare id: CreationOptional<number>;
  declare specId: ForeignKey<Spec['id']>;
  declare version: number;
  declare unit: AnyUnit;
  declare minValue: string | null;
  declare maxValue: string | null;
  declare preferredMin: string | null;
  declare preferredMax: string | null;
  declare rejectLimit: string | null;
  declare rule: DecisionRule;
  declare sourceKind: SpecSourceKind;
  declare sourceText: string;
  declare note: CreationOptional<string>;
  declare createdBy: ForeignKey<User['id']>;
  declare createdAt: CreationOptional<Date>;
  declare spec?: NonAttribute<Spec>;
}

export function initSpecModels(sequelize: Sequelize) {
  Spec.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      name: { type: DataTypes.STRING(160), allowNull: false },
      appliesTo: { type: DataTypes.STRING(200), allowNull: false, defaultValue: '' },
      shared: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
      lockVersion: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'specs', modelName: 'Spec' },
  );
  SpecVersion.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      version: { type: DataTypes.INTEGER, allowNull: false },
      unit: { type: DataTypes.STRING(8), allowNull: false },
      minValue: { type: DataTypes.DECIMAL, allowNull: true },
      maxValue: { type: DataTypes.DECIMAL, allowNull: true },
      preferredMin: { type: DataTypes.DECIMAL, allowNull: true },
      preferredMax: { type: DataTypes.DECIMAL, allowNull: true },
      rejectLimit: { type: DataTypes.DECIMAL, allowNull: true },
      rule: { type: DataTypes.STRING(16), allowNull: false },
      sourceKind: { type: DataTypes.STRING(24), allowNull: false },
      sourceText: { type: DataTypes.STRING(500), allowNull: false },
      note: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      createdAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'spec_versions', modelName: 'SpecVersion', updatedAt: false },
  );
}
