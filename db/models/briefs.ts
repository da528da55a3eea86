/**
 * The brief tables (migration 2026.12.02T04.30.00.create-briefs). The application reads
 * and writes them with SQL in src/features/briefs/briefs.server.ts; these models describe
 * the same columns for scripts and the console.
 */
import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

export class Brief extends Model<InferAttributes<Brief>, InferCreationAttributes<Brief>> {
  declare id: CreationOptional<string>;
  declare initiativeId: string;
  declare runId: string;
  declare analysisId: string;
  declare title: string;
  declare summary: string;
  declare plot: CreationOptional<'forest' | 'modifier' | 'none'>;
  declare ownCautions: CreationOptional<string[]>;
  declare state: CreationOptional<'draft' | 'published' | 'retracted'>;
  declare createdBy: string;
  declare updatedBy: string;
  declare retractedAt: Date | null;
  declare retractedBy: string | null;
  declare retractionReason: string | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export class BriefVersion extends Model<InferAttributes<BriefVersion>, InferCreationAttributes<BriefVersion>> {
  declare id: CreationOptional<string>;
  declare briefId: string;
  declare initiativeId: string;
  declare version: number;
  declare content: object;
  declare html: string;
  declare pdf: Buffer;
  declare sha256: string;
  declare pageSize: string;
  declare changeNote: CreationOptional<string>;
  declare publishedBy: string;
  declare publishedAt: CreationOptional<Date>;
  declare retractedPdf: Buffer | null;
}

export class BriefDelivery extends Model<InferAttributes<BriefDelivery>, InferCreationAttributes<BriefDelivery>> {
  declare id: CreationOptional<string>;
  declare sendId: string;
  declare briefId: string;
  declare initiativeId: string;
  declare version: number;
  declare recipientEmail: string;
  declare recipientName: CreationOptional<string>;
  declare status: 'sent' | 'failed';
  declare messageId: string | null;
  declare sentBy: string;
  declare sentAt: CreationOptional<Date>;
}

const uuidKey = { type: DataTypes.UUID, primaryKey: true, defaultValue: DataTypes.UUIDV4 };

/** Binds the brief models to one Sequelize instance. */
export function initBriefModels(sequelize: Sequelize) {
  Brief.init(
    {
      id: uuidKey,
      initiativeId: { type: DataTypes.UUID, allowNull: false },
      runId: { type: DataTypes.UUID, allowNull: false },
      analysisId: { type: DataTypes.UUID, allowNull: false },
      title: { type: DataTypes.TEXT, allowNull: false },
      summary: { type: DataTypes.TEXT, allowNull: false },
      plot: { type: DataTypes.TEXT, allowNull: false, defaultValue: 'forest' },
      ownCautions: { type: DataTypes.JSONB, allowNull: false, defaultValue: [] },
      state: { type: DataTypes.TEXT, allowNull: false, defaultValue: 'draft' },
      createdBy: { type: DataTypes.UUID, allowNull: false },
      updatedBy: { type: DataTypes.UUID, allowNull: false },
      retractedAt: { type: DataTypes.DATE, allowNull: true },
      retractedBy: { type: DataTypes.UUID, allowNull: true },
      retractionReason: { type: DataTypes.TEXT, allowNull: true },
      createdAt: DataTypes.DATE,
      updatedAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'briefs', underscored: true },
  );
  BriefVersion.init(
    {
      id: uuidKey,
      briefId: { type: DataTypes.UUID, allowNull: false },
      initiativeId: { type: DataTypes.UUID, allowNull: false },
      version: { type: DataTypes.INTEGER, allowNull: false },
      content: { type: DataTypes.JSONB, allowNull: false },
      html: { type: DataTypes.TEXT, allowNull: false },
      pdf: { type: DataTypes.BLOB, allowNull: false },
      sha256: { type: DataTypes.TEXT, allowNull: false },
      pageSize: { type: DataTypes.TEXT, allowNull: false },
      changeNote: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      publishedBy: { type: DataTypes.UUID, allowNull: false },
      publishedAt: { type: DataTypes.DATE, allowNull: false },
      retractedPdf: { type: DataTypes.BLOB, allowNull: true },
    },
    { sequelize, tableName: 'brief_versions', underscored: true, timestamps: false },
  );
  BriefDelivery.init(
    {
      id: uuidKey,
      sendId: { type: DataTypes.UUID, allowNull: false },
      briefId: { type: DataTypes.UUID, allowNull: false },
      initiativeId: { type: DataTypes.UUID, allowNull: false },
      version: { type: DataTypes.INTEGER, allowNull: false },
      recipientEmail: { type: DataTypes.TEXT, allowNull: false },
      recipientName: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      status: { type: DataTypes.TEXT, allowNull: false },
      messageId: { type: DataTypes.TEXT, allowNull: true },
      sentBy: { type: DataTypes.UUID, allowNull: false },
      sentAt: { type: DataTypes.DATE, allowNull: false },
    },
    { sequelize, tableName: 'brief_deliveries', underscored: true, timestamps: false },
  );
  Brief.hasMany(BriefVersion, { foreignKey: 'briefId', as: 'versions' });
  BriefVersion.belongsTo(Brief, { foreignKey: 'briefId', as: 'brief' });
  return { Brief, BriefVersion, BriefDelivery };
}
