/** Users, initiatives, memberships and sessions (db/migrations/…create-identity-and-initiatives). */
import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type NonAttribute, type Sequelize } from 'sequelize';
import { filledByDatabase, stamps, tableOptions, uuidKey } from './common';

export type Role = 'analyst' | 'clinician' | 'auditor';
export const ROLES: readonly Role[] = ['analyst', 'clinician', 'auditor'];
export type UserStatus = 'invited' | 'active' | 'deactivated';

export class User extends Model<InferAttributes<User>, InferCreationAttributes<User>> {
  declare id: CreationOptional<string>;
  declare email: string;
  declare displayName: string;
  declare passwordHash: string | null;
  declare status: CreationOptional<UserStatus>;
  declare isAdmin: CreationOptional<boolean>;
  declare isDemo: CreationOptional<boolean>;
  declare lastSignInAt: CreationOptional<Date | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare memberships?: NonAttribute<Membership[]>;
}

export class Initiative extends Model<InferAttributes<Initiative>, InferCreationAttributes<Initiative>> {
  declare id: CreationOptional<string>;
  declare name: string;
  declare slug: string;
  declare organisation: string;
  declare description: CreationOptional<string>;
  declare readersSeeRows: CreationOptional<boolean>;
  /** Distinct clinicians whose sign-offs a run needs, 1 to 5 (…add-required-sign-offs). */
  declare requiredSignOffs: CreationOptional<number>;
  declare archivedAt: CreationOptional<Date | null>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export class Membership extends Model<InferAttributes<Membership>, InferCreationAttributes<Membership>> {
  declare id: CreationOptional<string>;
  declare initiativeId: string;
  declare userId: string;
  declare role: Role;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare initiative?: NonAttribute<Initiative>;
  declare user?: NonAttribute<User>;
}

/** A sign-in session; the session library writes and validates these rows (src/lib/server/session.ts). */
export class Session extends Model<InferAttributes<Session>, InferCreationAttributes<Session>> {
  declare id: string;
  declare userId: string;
  declare expiresAt: Date;
  declare createdAt: CreationOptional<Date>;
  declare lastSeenAt: CreationOptional<Date>;
  declare clientAddress: string | null;
  declare userAgent: string | null;
}

export function initIdentity(sequelize: Sequelize): void {
  User.init(
    {
      id: uuidKey,
      email: { type: DataTypes.TEXT, allowNull: false },
      displayName: { type: DataTypes.TEXT, allowNull: false },
      passwordHash: { type: DataTypes.TEXT, allowNull: true },
      status: { type: DataTypes.TEXT, allowNull: false, defaultValue: 'invited' },
      isAdmin: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
      isDemo: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
      lastSignInAt: { type: DataTypes.DATE, allowNull: true },
      ...stamps,
    },
    { ...tableOptions(sequelize, 'users'), timestamps: true },
  );
  Initiative.init(
    {
      id: uuidKey,
      name: { type: DataTypes.TEXT, allowNull: false },
      slug: { type: DataTypes.TEXT, allowNull: false },
      organisation: { type: DataTypes.TEXT, allowNull: false },
      description: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      readersSeeRows: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
      requiredSignOffs: { type: DataTypes.SMALLINT, allowNull: false, defaultValue: 1 },
      archivedAt: { type: DataTypes.DATE, allowNull: true },
      ...stamps,
    },
    { ...tableOptions(sequelize, 'initiatives'), timestamps: true },
  );
  Membership.init(
    {
      id: uuidKey,
      initiativeId: { type: DataTypes.UUID, allowNull: false },
      userId: { type: DataTypes.UUID, allowNull: false },
      role: { type: DataTypes.TEXT, allowNull: false },
      ...stamps,
    },
    { ...tableOptions(sequelize, 'memberships'), timestamps: true },
  );
  Session.init(
    {
      id: { type: DataTypes.TEXT, primaryKey: true },
      userId: { type: DataTypes.UUID, allowNull: false },
      expiresAt: { type: DataTypes.DATE, allowNull: false },
      createdAt: filledByDatabase(DataTypes.DATE),
      lastSeenAt: filledByDatabase(DataTypes.DATE),
      clientAddress: { type: DataTypes.TEXT, allowNull: true },
      userAgent: { type: DataTypes.TEXT, allowNull: true },
    },
    tableOptions(sequelize, 'sessions'),
  );
  Membership.belongsTo(Initiative, { foreignKey: 'initiativeId', as: 'initiative' });
  Membership.belongsTo(User, { foreignKey: 'userId', as: 'user' });
  Initiative.hasMany(Membership, { foreignKey: 'initiativeId', as: 'memberships' });
  User.hasMany(Membership, { foreignKey: 'userId', as: 'memberships' });
  Session.belongsTo(User, { foreignKey: 'userId', as: 'user' });
}
