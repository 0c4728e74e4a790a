import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/**
 * An e-mail waiting to be sent (or sent). Rows are written in the same transaction as the change they report; the
 * sender loop delivers them with retries. `nextAttemptAt` null with `sentAt` null means it gave up. Bodies are
 * cleared ('' and null) once a row is sent or given up.
 */
export class OutboxMail extends Model<InferAttributes<OutboxMail>, InferCreationAttributes<OutboxMail>> {
  declare id: CreationOptional<string>;
  declare toAddress: string;
  declare subject: string;
  declare textBody: string;
  declare htmlBody: CreationOptional<string | null>;
  declare attempts: CreationOptional<number>;
  declare nextAttemptAt: CreationOptional<Date | null>;
  declare lastError: CreationOptional<string | null>;
  declare sentAt: CreationOptional<Date | null>;
  declare createdAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    OutboxMail.init(
      {
        id: { type: DataTypes.BIGINT, autoIncrement: true, primaryKey: true },
        toAddress: { type: DataTypes.STRING(320), allowNull: false },
        subject: { type: DataTypes.TEXT, allowNull: false },
        textBody: { type: DataTypes.TEXT, allowNull: false },
        htmlBody: { type: DataTypes.TEXT, allowNull: true },
        attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
        nextAttemptAt: { type: DataTypes.DATE, allowNull: true },
        lastError: { type: DataTypes.TEXT, allowNull: true },
        sentAt: { type: DataTypes.DATE, allowNull: true },
        createdAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'outbox', underscored: true, updatedAt: false },
    );
  }
}
