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
import type { ClearanceTemplateId } from '@shared/clearances/clearance.schema';
import type { AnyUnit } from '@shared/measure/quantities';
import type { ReviewState } from '@shared/readings/reading.schema';
import type { Build } from '../builds/build.model';
import type { Reading } from '../readings/reading.model';
import type { SpecVersion } from '../specs/spec.model';
import type { User } from '../users/user.model';

/** A result: a signed sum of readings or a formula over them, judged against a spec version; its figures are computed, not stored. */
export class Clearance extends Model<InferAttributes<Clearance>, InferCreationAttributes<Clearance>> {
  declare id: CreationOptional<number>;
  declare buildId: ForeignKey<Build['id']>;
  declare key: string;
  declare name: string;
  declare template: ClearanceTemplateId | null;
  declare specVersionId: ForeignKey<SpecVersion['id']> | null;
  /** NUMERIC, so a string from pg. */
  declare coverageFactor: CreationOptional<string | number | null>;
  /** A formula over the terms' symbols; null for a signed sum. */
  declare formula: CreationOptional<string | null>;
  declare constants: CreationOptional<Record<string, { value: string | number; unit: AnyUnit }>>;
  declare resultUnit: CreationOptional<AnyUnit | null>;
  declare note: CreationOptional<string>;
  declare reviewState: CreationOptional<ReviewState>;
  declare createdBy: ForeignKey<User['id']>;
  declare lockVersion: CreationOptional<number>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare terms?: NonAttribute<ClearanceTerm[]>;
}

/** One reading in a clearance, with its sign and place. */
export class ClearanceTerm extends Model<InferAttributes<ClearanceTerm>, InferCreationAttributes<ClearanceTerm>> {
  declare id: CreationOptional<number>;
  declare clearanceId: ForeignKey<Clearance['id']>;
  declare readingId: ForeignKey<Reading['id']>;
  declare sign: 1 | -1;
  declare position: number;
  /** The name a formula uses for the reading; null in a sum. */
  declare symbol: CreationOptional<string | null>;
}

export function initClearanceModels(sequelize: Sequelize) {
  Clearance.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      key: { type: DataTypes.STRING(40), allowNull: false },
      name: { type: DataTypes.STRING(120), allowNull: false },
      template: { type: DataTypes.STRING(40), allowNull: true },
      specVersionId: { type: DataTypes.INTEGER, allowNull: true },
      coverageFactor: { type: DataTypes.DECIMAL, allowNull: true },
      formula: { type: DataTypes.TEXT, allowNull: true },
      constants: { type: DataTypes.JSONB, allowNull: false, defaultValue: {} },
      resultUnit: { type: DataTypes.STRING(8), allowNull: true },
      note: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      reviewState: { type: DataTypes.STRING(16), allowNull: false, defaultValue: 'unchecked' },
      lockVersion: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'clearances', modelName: 'Clearance' },
  );
  ClearanceTerm.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      sign: { type: DataTypes.SMALLINT, allowNull: false },
      position: { type: DataTypes.INTEGER, allowNull: false },
      symbol: { type: DataTypes.STRING(40), allowNull: true },
    },
    { sequelize, tableName: 'clearance_terms', modelName: 'ClearanceTerm', timestamps: false },
  );
}
