import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/** A message caught by the local mail sink (development and tests only; nothing leaves the machine). */
export class SinkMail extends Model<InferAttributes<SinkMail>, InferCreationAttributes<SinkMail>> {
  declare id: CreationOptional<string>;
  declare mailFrom: string;
  declare rcptTo: string[];
  declare subject: string;
  declare textBody: string;
  declare raw: string;
  declare receivedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    SinkMail.init(
      {
        id: { type: DataTypes.BIGINT, autoIncrement: true, primaryKey: true },
        mailFrom: { type: DataTypes.TEXT, allowNull: false },
        rcptTo: { type: DataTypes.ARRAY(DataTypes.TEXT), allowNull: false },
        subject: { type: DataTypes.TEXT, allowNull: false },
        textBody: { type: DataTypes.TEXT, allowNull: false },
        raw: { type: DataTypes.TEXT, allowNull: false },
        receivedAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
      },
      { sequelize, tableName: 'sink_mails', underscored: true, timestamps: false },
    );
  }
}
