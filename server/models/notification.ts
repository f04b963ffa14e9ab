/** Notification (the bell), AccountToken (single-use account links) and MailMessage (the Outbox). Bound from initModels. */
import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';
import type { NotifyKind } from '../../shared/schemas/notifications';

export type EmailState = 'pending' | 'sent' | 'skipped';

export class Notification extends Model<InferAttributes<Notification>, InferCreationAttributes<Notification>> {
  declare id: CreationOptional<number>;
  declare recipientId: number;
  declare kind: NotifyKind;
  declare projectId: number;
  declare actorId: number | null;
  declare subject: string;
  declare text: string;
  declare link: string;
  declare readAt: CreationOptional<Date | null>;
  declare emailState: EmailState;
  declare emailedAt: CreationOptional<Date | null>;
  declare createdAt: CreationOptional<Date>;
}

export type AccountTokenPurpose = 'invite' | 'reset';

export class AccountToken extends Model<InferAttributes<AccountToken>, InferCreationAttributes<AccountToken>> {
  declare id: CreationOptional<number>;
  declare userId: number;
  declare purpose: AccountTokenPurpose;
  declare tokenHash: string;
  declare expiresAt: Date;
  declare usedAt: CreationOptional<Date | null>;
  declare createdAt: CreationOptional<Date>;
}

export class MailMessage extends Model<InferAttributes<MailMessage>, InferCreationAttributes<MailMessage>> {
  declare id: CreationOptional<number>;
  declare file: string;
  declare messageId: string | null;
  declare sender: string;
  declare recipients: string[];
  declare subject: string;
  declare text: string;
  declare links: string[];
  declare receivedAt: Date;
}

export function initNotificationModels(sequelize: Sequelize) {
  Notification.init(
    {
      id: { type: DataTypes.BIGINT, autoIncrement: true, primaryKey: true, get() { return Number(this.getDataValue('id')); } },
      recipientId: { type: DataTypes.INTEGER, allowNull: false },
      kind: { type: DataTypes.STRING(20), allowNull: false },
      projectId: { type: DataTypes.INTEGER, allowNull: false },
      actorId: { type: DataTypes.INTEGER, allowNull: true },
      subject: { type: DataTypes.STRING(200), allowNull: false },
      text: { type: DataTypes.TEXT, allowNull: false },
      link: { type: DataTypes.STRING(500), allowNull: false },
      readAt: { type: DataTypes.DATE, allowNull: true },
      emailState: { type: DataTypes.STRING(10), allowNull: false },
      emailedAt: { type: DataTypes.DATE, allowNull: true },
      createdAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'notifications', underscored: true, updatedAt: false },
  );
  AccountToken.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      userId: { type: DataTypes.INTEGER, allowNull: false },
      purpose: { type: DataTypes.STRING(10), allowNull: false },
      tokenHash: { type: DataTypes.STRING(64), allowNull: false },
      expiresAt: { type: DataTypes.DATE, allowNull: false },
      usedAt: { type: DataTypes.DATE, allowNull: true },
      createdAt: DataTypes.DATE,
    },
    { sequelize, tableName: 'account_tokens', underscored: true, updatedAt: false },
  );
  MailMessage.init(
    {
      id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true },
      file: { type: DataTypes.STRING(120), allowNull: false },
      messageId: { type: DataTypes.STRING(300), allowNull: true },
      sender: { type: DataTypes.STRING(400), allowNull: false },
      recipients: { type: DataTypes.JSONB, allowNull: false },
      subject: { type: DataTypes.STRING(400), allowNull: false },
      text: { type: DataTypes.TEXT, allowNull: false },
      links: { type: DataTypes.JSONB, allowNull: false },
      receivedAt: { type: DataTypes.DATE, allowNull: false },
    },
    { sequelize, tableName: 'mail_messages', underscored: true, timestamps: false },
  );
}
