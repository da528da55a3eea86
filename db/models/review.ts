/** The review of runs: its append-only steps and comments (…create-review, …add-review-signatures, …add-required-sign-offs). */
import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from 'sequelize';
import { filledByDatabase, tableOptions, uuidKey } from './common';
import { User } from './identity';

/** 'co-signed': a signature short of the sign-offs the initiative requires; it leaves the state as it was. */
export type ReviewStepKind = 'submitted' | 'co-signed' | 'signed-off' | 'sent-back';

export class ReviewStep extends Model<InferAttributes<ReviewStep>, InferCreationAttributes<ReviewStep>> {
  declare id: CreationOptional<string>;
  declare runId: string;
  declare initiativeId: string;
  declare kind: ReviewStepKind;
  declare actorId: string;
  declare note: CreationOptional<string>;
  /** What the signer's decision means, in their words or one of ours (…add-review-signatures); null on submissions. */
  declare meaning: CreationOptional<string | null>;
  /** SHA-256 of the canonical result the decision signs; null on submissions. */
  declare resultDigest: CreationOptional<string | null>;
  declare createdAt: CreationOptional<Date>;
  declare actor?: NonAttribute<User>;
}

export class RunComment extends Model<InferAttributes<RunComment>, InferCreationAttributes<RunComment>> {
  declare id: CreationOptional<string>;
  declare runId: string;
  declare initiativeId: string;
  declare parentId: string | null;
  declare authorId: string;
  declare body: string;
  declare createdAt: CreationOptional<Date>;
  declare author?: NonAttribute<User>;
}

export function initReview(sequelize: Sequelize): void {
  ReviewStep.init(
    {
      // GENERATED ALWAYS AS IDENTITY: the database numbers the steps.
      id: { type: DataTypes.BIGINT, primaryKey: true, autoIncrement: true },
      runId: { type: DataTypes.UUID, allowNull: false },
      initiativeId: { type: DataTypes.UUID, allowNull: false },
      kind: { type: DataTypes.TEXT, allowNull: false },
      actorId: { type: DataTypes.UUID, allowNull: false },
      note: filledByDatabase(DataTypes.TEXT),
      meaning: { type: DataTypes.TEXT, allowNull: true },
      resultDigest: { type: DataTypes.TEXT, allowNull: true },
      // clock_timestamp() by default, so steps in one transaction keep their order.
      createdAt: filledByDatabase(DataTypes.DATE),
    },
    tableOptions(sequelize, 'review_steps'),
  );
  RunComment.init(
    {
      id: uuidKey,
      runId: { type: DataTypes.UUID, allowNull: false },
      initiativeId: { type: DataTypes.UUID, allowNull: false },
      parentId: { type: DataTypes.UUID, allowNull: true },
      authorId: { type: DataTypes.UUID, allowNull: false },
      body: { type: DataTypes.TEXT, allowNull: false },
      createdAt: filledByDatabase(DataTypes.DATE),
    },
    tableOptions(sequelize, 'run_comments'),
  );
  ReviewStep.belongsTo(User, { foreignKey: 'actorId', as: 'actor' });
  RunComment.belongsTo(User, { foreignKey: 'authorId', as: 'author' });
}
