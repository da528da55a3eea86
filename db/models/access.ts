/** Sign-in support: e-mail links, sign-in attempts, personal API tokens (…create-access-and-audit). */
import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from 'sequelize';
import { filledByDatabase, tableOptions, uuidKey } from './common';
import { User } from './identity';

export type AuthTokenPurpose = 'invitation' | 'password-reset';

/** An invitation or password-reset link; only the SHA-256 of its token is kept. */
export class AuthToken extends Model<InferAttributes<AuthToken>, InferCreationAttributes<AuthToken>> {
  declare id: CreationOptional<string>;
  declare userId: string;
  declare purpose: AuthTokenPurpose;
  declare tokenHash: string;
  declare expiresAt: Date;
  declare usedAt: CreationOptional<Date | null>;
  declare createdBy: string | null;
  declare createdAt: CreationOptional<Date>;
}

/** One sign-in attempt, for throttling across app servers. */
export class SigninAttempt extends Model<InferAttributes<SigninAttempt>, InferCreationAttributes<SigninAttempt>> {
  declare id: CreationOptional<string>;
  declare accountKey: string;
  declare clientAddress: string;
  declare succeeded: boolean;
  declare attemptedAt: CreationOptional<Date>;
}

/** A personal API token for scripts; only the SHA-256 is kept. */
export class ApiToken extends Model<InferAttributes<ApiToken>, InferCreationAttributes<ApiToken>> {
  declare id: CreationOptional<string>;
  declare userId: string;
  declare name: string;
  declare tokenHash: string;
  declare prefix: string;
  declare createdAt: CreationOptional<Date>;
  declare lastUsedAt: CreationOptional<Date | null>;
  declare revokedAt: CreationOptional<Date | null>;
  declare user?: NonAttribute<User>;
}

export function initAccess(sequelize: Sequelize): void {
  AuthToken.init(
    {
      id: uuidKey,
      userId: { type: DataTypes.UUID, allowNull: false },
      purpose: { type: DataTypes.TEXT, allowNull: false },
      tokenHash: { type: DataTypes.TEXT, allowNull: false },
      expiresAt: { type: DataTypes.DATE, allowNull: false },
      usedAt: { type: DataTypes.DATE, allowNull: true },
      createdBy: { type: DataTypes.UUID, allowNull: true },
      createdAt: filledByDatabase(DataTypes.DATE),
    },
    tableOptions(sequelize, 'auth_tokens'),
  );
  SigninAttempt.init(
    {
      // GENERATED ALWAYS AS IDENTITY: the database numbers the rows, an insert never names the id.
      id: { type: DataTypes.BIGINT, primaryKey: true, autoIncrement: true },
      accountKey: { type: DataTypes.TEXT, allowNull: false },
      clientAddress: { type: DataTypes.TEXT, allowNull: false },
      succeeded: { type: DataTypes.BOOLEAN, allowNull: false },
      attemptedAt: filledByDatabase(DataTypes.DATE),
    },
    tableOptions(sequelize, 'signin_attempts'),
  );
  ApiToken.init(
    {
      id: uuidKey,
      userId: { type: DataTypes.UUID, allowNull: false },
      name: { type: DataTypes.TEXT, allowNull: false },
      tokenHash: { type: DataTypes.TEXT, allowNull: false },
      prefix: { type: DataTypes.TEXT, allowNull: false },
      createdAt: filledByDatabase(DataTypes.DATE),
      lastUsedAt: { type: DataTypes.DATE, allowNull: true },
      revokedAt: { type: DataTypes.DATE, allowNull: true },
    },
    tableOptions(sequelize, 'api_tokens'),
  );
  ApiToken.belongsTo(User, { foreignKey: 'userId', as: 'user' });
  AuthToken.belongsTo(User, { foreignKey: 'userId', as: 'user' });
}
