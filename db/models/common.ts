import { DataTypes, type DataType, type ModelOptions, type Sequelize } from 'sequelize';

/** A uuid key. The database's default (gen_random_uuid()) is not used: the model sets one, so an insert can name it. */
export const uuidKey = { type: DataTypes.UUID, primaryKey: true, defaultValue: DataTypes.UUIDV4 };

/** created_at / updated_at, on the tables that have both. */
export const stamps = { createdAt: DataTypes.DATE, updatedAt: DataTypes.DATE };

/**
 * The options every model shares. Tables are created by migrations, never by sync(): the
 * model names the table and its snake_case columns and adds nothing. Timestamps are off
 * unless a table has both created_at and updated_at (its model turns them on); elsewhere
 * the database's own defaults (now(), clock_timestamp()) fill the times.
 */
export function tableOptions(sequelize: Sequelize, tableName: string): ModelOptions & { sequelize: Sequelize } {
  return { sequelize, tableName, underscored: true, timestamps: false, freezeTableName: true };
}

/**
 * A NOT NULL column with a database default (now(), clock_timestamp(), '[]', false…): an
 * insert leaves it out and the database fills it. It is not marked allowNull: false here,
 * which would refuse the missing value before the database could fill it.
 */
export const filledByDatabase = (type: DataType) => ({ type });
