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
import type { ReadingKind, ReviewState } from '@shared/readings/reading.schema';
import type { ReadingUnit } from '@shared/measure/record-units';
import type { Build, Part } from '../builds/build.model';
import type { Moment } from '../clips/clip.model';
import type { Instrument } from '../instruments/instrument.model';
import type { User } from '../users/user.model';

/** What an instrument showed at a moment. Figures are NUMERIC text in `unit`, as entered. */
export class Reading extends Model<InferAttributes<Reading>, InferCreationAttributes<Reading>> {
  declare id: CreationOptional<number>;
  declare buildId: ForeignKey<Build['id']>;
  declare momentId: ForeignKey<Moment['id']>;
  declare instrumentId: ForeignKey<Instrument['id']>;
  declare partId: ForeignKey<Part['id']> | null;
  declare key: string;
  declare name: string;
  declare kind: ReadingKind;
  declare unit: ReadingUnit;
  declare value: string | null;
  declare passes: string | null;
  declare stops: string | null;
  declare repeatedValues: string[] | null;
  declare entered: Record<string, string | string[]>;
  declare temperatureC: string | null;
  declare material: string | null;
  declare note: CreationOptional<string>;
  declare takenOn: string;
  declare reviewState: CreationOptional<ReviewState>;
  declare createdBy: ForeignKey<User['id']>;
  declare updatedBy: ForeignKey<User['id']>;
  declare lockVersion: CreationOptional<number>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare moment?: NonAttribute<Moment>;
  declare instrument?: NonAttribute<Instrument>;
}

/** A reading as it was before one edit. */
export class ReadingRevision extends Model<InferAttributes<ReadingRevision>, InferCreationAttributes<ReadingRevision>> {
  declare id: CreationOptional<number>;
  declare readingId: ForeignKey<Reading['id']>;
  declare lockVersion: number;
  declare snapshot: Record<string, unknown>;
  declare changedBy: ForeignKey<User['id']>;
  declare createdAt: CreationOptional<Date>;
}

export function initReadingModels(sequelize: Sequelize) {
  Reading.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      partId: { type: DataTypes.INTEGER, allowNull: true },
      key: { type: DataTypes.STRING(40), allowNull: false },
      name: { type: DataTypes.STRING(120), allowNull: false },
      kind: { type: DataTypes.STRING(16), allowNull: false },
      unit: { type: DataTypes.STRING(8), allowNull: false },
      value: { type: DataTypes.DECIMAL, allowNull: true },
      passes: { type: DataTypes.DECIMAL, allowNull: true },
      stops: { type: DataTypes.DECIMAL, allowNull: true },
      repeatedValues: { type: DataTypes.ARRAY(DataTypes.DECIMAL), allowNull: true },
      entered: { type: DataTypes.JSONB, allowNull: false },
      temperatureC: { type: DataTypes.DECIMAL, allowNull: true },
      material: { type: DataTypes.STRING(40), allowNull: true },
      note: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      takenOn: { type: DataTypes.DATEONLY, allowNull: false },
      reviewState: { type: DataTypes.STRING(16), allowNull: false, defaultValue: 'unchecked' },
      lockVersion: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'readings', modelName: 'Reading' },
  );
  ReadingRevision.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      lockVersion: { type: DataTypes.INTEGER, allowNull: false },
      snapshot: { type: DataTypes.JSONB, allowNull: false },
      createdAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'reading_revisions', modelName: 'ReadingRevision', updatedAt: false },
  );
}
