/** Analyses and their runs (…create-analyses-and-runs, …add-run-verification). */
import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from 'sequelize';
import { filledByDatabase, stamps, tableOptions, uuidKey } from './common';
import type { AnySpec } from '@/engine/boundary/schemas';
import { ExtractVersion } from './extracts';
import { User } from './identity';

export class Analysis extends Model<InferAttributes<Analysis>, InferCreationAttributes<Analysis>> {
  declare id: CreationOptional<string>;
  declare initiativeId: string;
  declare extractVersionId: string;
  declare title: string;
  declare question: string;
  declare prespecified: boolean;
  declare prespecifiedAt: Date | null;
  /** The engine specification, checked against its schema when the analysis was written. */
  declare spec: AnySpec;
  declare createdBy: string;
  declare createdAt: CreationOptional<Date>;
  declare updatedBy: string;
  declare updatedAt: CreationOptional<Date>;
  declare extractVersion?: NonAttribute<ExtractVersion>;
}

export type RunStatusColumn = 'queued' | 'running' | 'succeeded' | 'failed' | 'cancelled';

/** One execution of the engine. `result` is jsonb, given as stored; its reader parses it. */
export class Run extends Model<InferAttributes<Run>, InferCreationAttributes<Run>> {
  declare id: CreationOptional<string>;
  declare analysisId: string;
  declare initiativeId: string;
  declare extractVersionId: string;
  declare status: RunStatusColumn;
  declare progress: CreationOptional<{ stage: string; fraction: number }>;
  /** The specification snapshot the run executes. */
  declare spec: AnySpec;
  declare specHash: string;
  declare extractSha256: string;
  declare engineVersion: CreationOptional<string | null>;
  /** bigint: read back as a string. */
  declare seed: CreationOptional<string | number | null>;
  declare exploratory: boolean;
  declare cautionText: string;
  declare cautionVersion: string;
  declare result: CreationOptional<object | null>;
  declare error: CreationOptional<Record<string, unknown> | null>;
  declare startedBy: string;
  declare queuedAt: CreationOptional<Date>;
  declare startedAt: CreationOptional<Date | null>;
  declare finishedAt: CreationOptional<Date | null>;
  declare heartbeatAt: CreationOptional<Date | null>;
  declare worker: CreationOptional<string | null>;
  declare cancelRequested: CreationOptional<boolean>;
  declare verifiesRunId: CreationOptional<string | null>;
  declare verification: CreationOptional<Record<string, unknown> | null>;
  declare analysis?: NonAttribute<Analysis>;
  declare starter?: NonAttribute<User>;
  declare extractVersion?: NonAttribute<ExtractVersion>;
}

export function initAnalyses(sequelize: Sequelize): void {
  Analysis.init(
    {
      id: uuidKey,
      initiativeId: { type: DataTypes.UUID, allowNull: false },
      extractVersionId: { type: DataTypes.UUID, allowNull: false },
      title: { type: DataTypes.TEXT, allowNull: false },
      question: { type: DataTypes.TEXT, allowNull: false },
      prespecified: { type: DataTypes.BOOLEAN, allowNull: false },
      prespecifiedAt: { type: DataTypes.DATE, allowNull: true },
      spec: { type: DataTypes.JSONB, allowNull: false },
      createdBy: { type: DataTypes.UUID, allowNull: false },
      updatedBy: { type: DataTypes.UUID, allowNull: false },
      ...stamps,
    },
    { ...tableOptions(sequelize, 'analyses'), timestamps: true },
  );
  Run.init(
    {
      id: uuidKey,
      analysisId: { type: DataTypes.UUID, allowNull: false },
      initiativeId: { type: DataTypes.UUID, allowNull: false },
      extractVersionId: { type: DataTypes.UUID, allowNull: false },
      status: { type: DataTypes.TEXT, allowNull: false },
      progress: filledByDatabase(DataTypes.JSONB),
      spec: { type: DataTypes.JSONB, allowNull: false },
      specHash: { type: DataTypes.TEXT, allowNull: false },
      extractSha256: { type: DataTypes.TEXT, allowNull: false, field: 'extract_sha256' },
      engineVersion: { type: DataTypes.TEXT, allowNull: true },
      seed: { type: DataTypes.BIGINT, allowNull: true },
      exploratory: { type: DataTypes.BOOLEAN, allowNull: false },
      cautionText: { type: DataTypes.TEXT, allowNull: false },
      cautionVersion: { type: DataTypes.TEXT, allowNull: false },
      result: { type: DataTypes.JSONB, allowNull: true },
      error: { type: DataTypes.JSONB, allowNull: true },
      startedBy: { type: DataTypes.UUID, allowNull: false },
      queuedAt: filledByDatabase(DataTypes.DATE),
      startedAt: { type: DataTypes.DATE, allowNull: true },
      finishedAt: { type: DataTypes.DATE, allowNull: true },
      heartbeatAt: { type: DataTypes.DATE, allowNull: true },
      worker: { type: DataTypes.TEXT, allowNull: true },
      cancelRequested: filledByDatabase(DataTypes.BOOLEAN),
      verifiesRunId: { type: DataTypes.UUID, allowNull: true },
      verification: { type: DataTypes.JSONB, allowNull: true },
    },
    tableOptions(sequelize, 'runs'),
  );
  Run.belongsTo(Analysis, { foreignKey: 'analysisId', as: 'analysis' });
  Analysis.hasMany(Run, { foreignKey: 'analysisId', as: 'runs' });
  Run.belongsTo(User, { foreignKey: 'startedBy', as: 'starter' });
  Analysis.belongsTo(ExtractVersion, { foreignKey: 'extractVersionId', as: 'extractVersion' });
  Run.belongsTo(ExtractVersion, { foreignKey: 'extractVersionId', as: 'extractVersion' });
}
