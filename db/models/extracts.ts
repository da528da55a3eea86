/** Cohort extracts, their versions, their stored columns and upload intakes (…create-extracts). */
import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from 'sequelize';
import { filledByDatabase, tableOptions } from './common';
import { Initiative, User } from './identity';

export class Extract extends Model<InferAttributes<Extract>, InferCreationAttributes<Extract>> {
  declare id: string;
  declare initiativeId: string;
  declare name: string;
  declare createdBy: string;
  declare createdAt: CreationOptional<Date>;
  declare archivedAt: CreationOptional<Date | null>;
  declare archivedBy: CreationOptional<string | null>;
}

/** An immutable version of an extract once confirmed (a trigger freezes it, policies/rls/003_extracts.sql). */
export class ExtractVersion extends Model<InferAttributes<ExtractVersion>, InferCreationAttributes<ExtractVersion>> {
  declare id: string;
  declare extractId: string;
  declare initiativeId: string;
  declare versionNumber: number;
  declare status: 'needs-review' | 'ready';
  declare sha256: string;
  /** bigint: read back as a string. */
  declare byteCount: number | string;
  declare rowCount: number;
  declare columnCount: number;
  declare delimiter: string;
  declare uploadedBy: string;
  declare uploadedAt: CreationOptional<Date>;
  declare profile: unknown;
  declare findings: CreationOptional<unknown[]>;
  declare droppedColumns: CreationOptional<string[]>;
  declare dictionary: CreationOptional<unknown[] | null>;
  declare attestation: CreationOptional<Record<string, unknown> | null>;
  declare confirmedBy: CreationOptional<string | null>;
  declare confirmedAt: CreationOptional<Date | null>;
  declare initiative?: NonAttribute<Initiative>;
  declare uploader?: NonAttribute<User>;
  declare extract?: NonAttribute<Extract>;
}

/**
 * One stored column of a version. Its values are written in bulk as bytea by
 * storeVersion and read by loadColumns; the model serves listings of names and types.
 */
export class ExtractColumn extends Model<InferAttributes<ExtractColumn>, InferCreationAttributes<ExtractColumn>> {
  declare versionId: string;
  declare initiativeId: string;
  declare position: number;
  declare name: string;
  declare storage: 'numeric' | 'text';
  declare rowCount: number;
  declare missingCount: number;
  declare values: Buffer;
  declare missing: Buffer;
  declare levels: string[] | null;
}

export type IntakeStatus = 'processing' | 'refused' | 'failed' | 'stored';

/** An upload while it is processed, or after it was refused or failed. */
export class ExtractIntake extends Model<InferAttributes<ExtractIntake>, InferCreationAttributes<ExtractIntake>> {
  declare id: string;
  declare extractId: string;
  declare initiativeId: string;
  declare name: string;
  declare newExtract: boolean;
  declare uploadedBy: string;
  declare status: IntakeStatus;
  declare stage: string;
  declare percent: CreationOptional<number>;
  /** bigint: read back as a string. */
  declare byteCount: CreationOptional<number | string | null>;
  declare reasons: CreationOptional<unknown[]>;
  declare heartbeatAt: CreationOptional<Date>;
  declare createdAt: CreationOptional<Date>;
  declare finishedAt: CreationOptional<Date | null>;
  declare uploader?: NonAttribute<User>;
}

export function initExtracts(sequelize: Sequelize): void {
  Extract.init(
    {
      id: { type: DataTypes.UUID, primaryKey: true },
      initiativeId: { type: DataTypes.UUID, allowNull: false },
      name: { type: DataTypes.TEXT, allowNull: false },
      createdBy: { type: DataTypes.UUID, allowNull: false },
      createdAt: filledByDatabase(DataTypes.DATE),
      archivedAt: { type: DataTypes.DATE, allowNull: true },
      archivedBy: { type: DataTypes.UUID, allowNull: true },
    },
    tableOptions(sequelize, 'extracts'),
  );
  ExtractVersion.init(
    {
      id: { type: DataTypes.UUID, primaryKey: true },
      extractId: { type: DataTypes.UUID, allowNull: false },
      initiativeId: { type: DataTypes.UUID, allowNull: false },
      versionNumber: { type: DataTypes.INTEGER, allowNull: false },
      status: { type: DataTypes.TEXT, allowNull: false },
      sha256: { type: DataTypes.TEXT, allowNull: false },
      byteCount: { type: DataTypes.BIGINT, allowNull: false },
      rowCount: { type: DataTypes.INTEGER, allowNull: false },
      columnCount: { type: DataTypes.INTEGER, allowNull: false },
      delimiter: { type: DataTypes.TEXT, allowNull: false },
      uploadedBy: { type: DataTypes.UUID, allowNull: false },
      uploadedAt: filledByDatabase(DataTypes.DATE),
      profile: { type: DataTypes.JSONB, allowNull: false },
      findings: filledByDatabase(DataTypes.JSONB),
      droppedColumns: filledByDatabase(DataTypes.ARRAY(DataTypes.TEXT)),
      dictionary: { type: DataTypes.JSONB, allowNull: true },
      attestation: { type: DataTypes.JSONB, allowNull: true },
      confirmedBy: { type: DataTypes.UUID, allowNull: true },
      confirmedAt: { type: DataTypes.DATE, allowNull: true },
    },
    tableOptions(sequelize, 'extract_versions'),
  );
  ExtractColumn.init(
    {
      versionId: { type: DataTypes.UUID, primaryKey: true },
      initiativeId: { type: DataTypes.UUID, allowNull: false },
      position: { type: DataTypes.INTEGER, primaryKey: true },
      name: { type: DataTypes.TEXT, allowNull: false },
      storage: { type: DataTypes.TEXT, allowNull: false },
      rowCount: { type: DataTypes.INTEGER, allowNull: false },
      missingCount: { type: DataTypes.INTEGER, allowNull: false },
      values: { type: DataTypes.BLOB, allowNull: false },
      missing: { type: DataTypes.BLOB, allowNull: false },
      levels: { type: DataTypes.ARRAY(DataTypes.TEXT), allowNull: true },
    },
    tableOptions(sequelize, 'extract_columns'),
  );
  ExtractIntake.init(
    {
      id: { type: DataTypes.UUID, primaryKey: true },
      extractId: { type: DataTypes.UUID, allowNull: false },
      initiativeId: { type: DataTypes.UUID, allowNull: false },
      name: { type: DataTypes.TEXT, allowNull: false },
      newExtract: { type: DataTypes.BOOLEAN, allowNull: false },
      uploadedBy: { type: DataTypes.UUID, allowNull: false },
      status: { type: DataTypes.TEXT, allowNull: false },
      stage: { type: DataTypes.TEXT, allowNull: false },
      percent: filledByDatabase(DataTypes.REAL),
      byteCount: { type: DataTypes.BIGINT, allowNull: true },
      reasons: filledByDatabase(DataTypes.JSONB),
      heartbeatAt: filledByDatabase(DataTypes.DATE),
      createdAt: filledByDatabase(DataTypes.DATE),
      finishedAt: { type: DataTypes.DATE, allowNull: true },
    },
    tableOptions(sequelize, 'extract_intakes'),
  );
  ExtractVersion.belongsTo(Extract, { foreignKey: 'extractId', as: 'extract' });
  Extract.hasMany(ExtractVersion, { foreignKey: 'extractId', as: 'versions' });
  ExtractColumn.belongsTo(ExtractVersion, { foreignKey: 'versionId', as: 'version' });
  ExtractVersion.belongsTo(Initiative, { foreignKey: 'initiativeId', as: 'initiative' });
  ExtractVersion.belongsTo(User, { foreignKey: 'uploadedBy', as: 'uploader' });
  ExtractIntake.belongsTo(User, { foreignKey: 'uploadedBy', as: 'uploader' });
}
