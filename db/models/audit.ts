/**
 * The audit trail, read-only: rows are appended by recordAudit (src/features/audit), whose
 * INSERT lets the database's trigger link the hash chain, and never changed. This model
 * only reads them; audit checkpoints have no table (they are functions over this one,
 * policies/rls/005_audit_checkpoints.sql).
 */
import { DataTypes, Model, type InferAttributes, type NonAttribute, type Sequelize } from 'sequelize';
import { tableOptions } from './common';
import { User } from './identity';

export class AuditEvent extends Model<InferAttributes<AuditEvent>, never> {
  declare id: string;
  declare chainPosition: string;
  declare occurredAt: Date;
  declare actorId: string | null;
  declare actorRole: string | null;
  declare action: string;
  declare subjectType: string | null;
  declare subjectId: string | null;
  declare initiativeId: string | null;
  declare clientAddress: string | null;
  declare details: Record<string, unknown>;
  declare prevHash: string;
  declare hash: string;
  declare actor?: NonAttribute<User>;
}

function refuseWrite(): never {
  throw new Error('Audit events are appended through recordAudit and never changed.');
}

export function initAudit(sequelize: Sequelize): void {
  AuditEvent.init(
    {
      id: { type: DataTypes.BIGINT, primaryKey: true },
      chainPosition: { type: DataTypes.BIGINT, allowNull: false },
      occurredAt: { type: DataTypes.DATE, allowNull: false },
      actorId: { type: DataTypes.UUID, allowNull: true },
      actorRole: { type: DataTypes.TEXT, allowNull: true },
      action: { type: DataTypes.TEXT, allowNull: false },
      subjectType: { type: DataTypes.TEXT, allowNull: true },
      subjectId: { type: DataTypes.TEXT, allowNull: true },
      initiativeId: { type: DataTypes.UUID, allowNull: true },
      clientAddress: { type: DataTypes.TEXT, allowNull: true },
      details: { type: DataTypes.JSONB, allowNull: false },
      prevHash: { type: DataTypes.TEXT, allowNull: false },
      hash: { type: DataTypes.TEXT, allowNull: false },
    },
    {
      ...tableOptions(sequelize, 'audit_events'),
      hooks: {
        beforeCreate: refuseWrite, beforeBulkCreate: refuseWrite, beforeUpdate: refuseWrite,
        beforeBulkUpdate: refuseWrite, beforeDestroy: refuseWrite, beforeBulkDestroy: refuseWrite,
      },
    },
  );
  AuditEvent.belongsTo(User, { foreignKey: 'actorId', as: 'actor' });
}
