import {
  DataTypes,
  Model,
  type CreationOptional,
  type ForeignKey,
  type InferAttributes,
  type InferCreationAttributes,
  type Sequelize,
} from 'sequelize';
import type { InstrumentKind } from '@shared/instruments/instrument.schema';
import type { ReadingUnit } from '@shared/measure/record-units';
import type { Moment } from '../clips/clip.model';
import type { User } from '../users/user.model';

/** A builder's instrument. DECIMAL columns come back from pg as strings, exactly as entered. */
export class Instrument extends Model<InferAttributes<Instrument>, InferCreationAttributes<Instrument>> {
  declare id: CreationOptional<number>;
  declare ownerId: ForeignKey<User['id']>;
  declare name: string;
  declare kind: InstrumentKind;
  declare serial: CreationOptional<string>;
  declare unit: ReadingUnit;
  declare resolution: string;
  declare statedUncertainty: CreationOptional<string | null>;
  declare calibrationUncertainty: CreationOptional<string | null>;
  declare calibrationCoverageFactor: CreationOptional<string | number | null>;
  declare maxPermissibleError: CreationOptional<string | null>;
  declare settingStandardUncertainty: CreationOptional<string | null>;
  declare settingStandardCoverageFactor: CreationOptional<string | number | null>;
  declare calibrationIntervalDays: CreationOptional<number | null>;
  declare lastCalibratedOn: CreationOptional<string | null>;
  declare calibratedBy: CreationOptional<string>;
  declare note: CreationOptional<string>;
  declare retired: CreationOptional<boolean>;
  declare lockVersion: CreationOptional<number>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

/** What an instrument showed on a setting standard on a day. */
export class ZeroCheck extends Model<InferAttributes<ZeroCheck>, InferCreationAttributes<ZeroCheck>> {
  declare id: CreationOptional<number>;
  declare instrumentId: ForeignKey<Instrument['id']>;
  declare checkedOn: string;
  declare unit: ReadingUnit;
  declare standardSize: string;
  declare shown: string;
  declare momentId: ForeignKey<Moment['id']> | null;
  declare note: CreationOptional<string>;
  declare createdBy: ForeignKey<User['id']>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export function initInstrumentModels(sequelize: Sequelize) {
  Instrument.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      name: { type: DataTypes.STRING(120), allowNull: false },
      kind: { type: DataTypes.STRING(32), allowNull: false },
      serial: { type: DataTypes.STRING(80), allowNull: false, defaultValue: '' },
      unit: { type: DataTypes.STRING(8), allowNull: false },
      resolution: { type: DataTypes.DECIMAL, allowNull: false },
      statedUncertainty: { type: DataTypes.DECIMAL, allowNull: true },
      calibrationUncertainty: { type: DataTypes.DECIMAL, allowNull: true },
      calibrationCoverageFactor: { type: DataTypes.DECIMAL, allowNull: true },
      maxPermissibleError: { type: DataTypes.DECIMAL, allowNull: true },
      settingStandardUncertainty: { type: DataTypes.DECIMAL, allowNull: true },
      settingStandardCoverageFactor: { type: DataTypes.DECIMAL, allowNull: true },
      calibrationIntervalDays: { type: DataTypes.INTEGER, allowNull: true },
      lastCalibratedOn: { type: DataTypes.DATEONLY, allowNull: true },
      calibratedBy: { type: DataTypes.STRING(160), allowNull: false, defaultValue: '' },
      note: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      retired: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
      lockVersion: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'instruments', modelName: 'Instrument' },
  );
  ZeroCheck.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      checkedOn: { type: DataTypes.DATEONLY, allowNull: false },
      unit: { type: DataTypes.STRING(8), allowNull: false },
      standardSize: { type: DataTypes.DECIMAL, allowNull: false },
      shown: { type: DataTypes.DECIMAL, allowNull: false },
      momentId: { type: DataTypes.INTEGER, allowNull: true },
      note: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'zero_checks', modelName: 'ZeroCheck' },
  );
}
