import { initBriefModels } from './briefs';
import { DataTypes, Model, type InferAttributes, type InferCreationAttributes, type CreationOptional, type Sequelize } from 'sequelize';

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
  declare lastSignInAt: Date | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
}

export class Initiative extends Model<InferAttributes<Initiative>, InferCreationAttributes<Initiative>> {
  declare id: CreationOptional<string>;
  declare name: string;
  declare slug: string;
  declare organisation: string;
  declare description: CreationOptional<string>;
  declare readersSeeRows: CreationOptional<boolean>;
  declare archivedAt: Date | null;
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
}

const uuidKey = { type: DataTypes.UUID, primaryKey: true, defaultValue: DataTypes.UUIDV4 };
const stamps = { createdAt: DataTypes.DATE, updatedAt: DataTypes.DATE };

/** Binds every model to one Sequelize instance. Tables are created by migrations, not sync(). */
export function initModels(sequelize: Sequelize) {
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
    { sequelize, tableName: 'users', underscored: true },
  );
  Initiative.init(
    {
      id: uuidKey,
      name: { type: DataTypes.TEXT, allowNull: false },
      slug: { type: DataTypes.TEXT, allowNull: false },
      organisation: { type: DataTypes.TEXT, allowNull: false },
      description: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      readersSeeRows: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
      archivedAt: { type: DataTypes.DATE, allowNull: true },
      ...stamps,
    },
    { sequelize, tableName: 'initiatives', underscored: true },
  );
  Membership.init(
    {
      id: uuidKey,
      initiativeId: { type: DataTypes.UUID, allowNull: false },
      userId: { type: DataTypes.UUID, allowNull: false },
      role: { type: DataTypes.TEXT, allowNull: false },
      ...stamps,
    },
    { sequelize, tableName: 'memberships', underscored: true },
  );
  Membership.belongsTo(Initiative, { foreignKey: 'initiativeId', as: 'initiative' });
  Membership.belongsTo(User, { foreignKey: 'userId', as: 'user' });
  Initiative.hasMany(Membership, { foreignKey: 'initiativeId', as: 'memberships' });
  User.hasMany(Membership, { foreignKey: 'userId', as: 'memberships' });
  return { User, Initiative, Membership, ...initBriefModels(sequelize) };
}
