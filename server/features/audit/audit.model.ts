import {
  DataTypes,
  Model,
  type CreationOptional,
  type ForeignKey,
  type InferAttributes,
  type InferCreationAttributes,
  type Sequelize,
} from 'sequelize';
import type { User } from '../users/user.model';

/** One line of the audit log. The table refuses UPDATE, DELETE and TRUNCATE (a trigger). */
export class AuditEntry extends Model<InferAttributes<AuditEntry>, InferCreationAttributes<AuditEntry>> {
  /** BIGINT: a string from pg. */
  declare id: CreationOptional<string>;
  declare at: CreationOptional<Date>;
  declare actorId: ForeignKey<User['id']> | null;
  declare action: string;
  declare subjectType: string;
  declare subjectId: number;
  declare storyId: number | null;
  declare before: Record<string, unknown> | null;
  declare after: Record<string, unknown> | null;
  declare note: CreationOptional<string>;
}

export function initAuditModel(sequelize: Sequelize) {
  AuditEntry.init(
    {
      id: { type: DataTypes.BIGINT, autoIncrement: true, primaryKey: true },
      at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
      action: { type: DataTypes.STRING(40), allowNull: false },
      subjectType: { type: DataTypes.STRING(24), allowNull: false },
      subjectId: { type: DataTypes.INTEGER, allowNull: false },
      storyId: { type: DataTypes.INTEGER, allowNull: true },
      before: { type: DataTypes.JSONB, allowNull: true },
      after: { type: DataTypes.JSONB, allowNull: true },
      note: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
    },
    { sequelize, tableName: 'audit_log', modelName: 'AuditEntry', timestamps: false },
  );
}
