import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/** Append-only record of who did what (sign-ins, membership changes, ...). */
export class AuditEvent extends Model<InferAttributes<AuditEvent>, InferCreationAttributes<AuditEvent>> {
  declare id: CreationOptional<string>;
  declare actorId: string | null;
  declare labId: string | null;
  /** dotted verb, e.g. `member.added` */
  declare action: string;
  declare details: CreationOptional<Record<string, unknown>>;
  declare createdAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    AuditEvent.init(
      {
        id: { type: DataTypes.BIGINT, autoIncrement: true, primaryKey: true },
        actorId: { type: DataTypes.UUID, allowNull: true },
        labId: { type: DataTypes.UUID, allowNull: true },
        action: { type: DataTypes.STRING(64), allowNull: false },
        details: { type: DataTypes.JSONB, allowNull: false, defaultValue: {} },
        createdAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'audit_events', underscored: true, updatedAt: false },
    );
  }
}
