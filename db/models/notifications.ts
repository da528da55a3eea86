/** Notifications and each person's choice of e-mail (…create-notifications). */
import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';
import { filledByDatabase, tableOptions, uuidKey } from './common';

export type NotificationKind = 'submitted' | 'sent-back' | 'signed-off' | 'reply' | 'mention' | 'brief-published';
export type NotificationMail = 'immediate' | 'daily' | 'none';

export class Notification extends Model<InferAttributes<Notification>, InferCreationAttributes<Notification>> {
  declare id: CreationOptional<string>;
  declare recipientId: string;
  declare initiativeId: string;
  declare actorId: string;
  declare kind: NotificationKind;
  declare runId: string | null;
  declare briefId: string | null;
  declare title: string;
  declare excerpt: CreationOptional<string>;
  declare createdAt: CreationOptional<Date>;
  declare readAt: CreationOptional<Date | null>;
}

export class NotificationSetting extends Model<InferAttributes<NotificationSetting>, InferCreationAttributes<NotificationSetting>> {
  declare userId: string;
  declare mail: CreationOptional<NotificationMail>;
  declare lastDigestAt: CreationOptional<Date | null>;
  declare updatedAt: CreationOptional<Date>;
}

export function initNotifications(sequelize: Sequelize) {
  Notification.init(
    {
      id: uuidKey,
      recipientId: { type: DataTypes.UUID, allowNull: false },
      initiativeId: { type: DataTypes.UUID, allowNull: false },
      actorId: { type: DataTypes.UUID, allowNull: false },
      kind: { type: DataTypes.TEXT, allowNull: false },
      runId: { type: DataTypes.UUID, allowNull: true },
      briefId: { type: DataTypes.UUID, allowNull: true },
      title: { type: DataTypes.TEXT, allowNull: false },
      excerpt: filledByDatabase(DataTypes.TEXT),
      createdAt: filledByDatabase(DataTypes.DATE),
      readAt: { type: DataTypes.DATE, allowNull: true },
    },
    tableOptions(sequelize, 'notifications'),
  );
  NotificationSetting.init(
    {
      userId: { type: DataTypes.UUID, primaryKey: true },
      mail: filledByDatabase(DataTypes.TEXT),
      lastDigestAt: { type: DataTypes.DATE, allowNull: true },
      updatedAt: filledByDatabase(DataTypes.DATE),
    },
    tableOptions(sequelize, 'notification_settings'),
  );
  return { Notification, NotificationSetting };
}
