import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';
import { LAB_ROLES, type LabRole } from './roles';

/** An invitation to join a lab, sent to an e-mail address that has no account yet. Only the token's hash is kept. */
export class Invitation extends Model<InferAttributes<Invitation>, InferCreationAttributes<Invitation>> {
  declare id: CreationOptional<string>;
  declare labId: string;
  declare email: string;
  declare role: LabRole;
  /** sha256 hex of the token sent by mail */
  declare tokenHash: string;
  declare expiresAt: Date;
  declare acceptedAt: CreationOptional<Date | null>;
  declare invitedById: string | null;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    Invitation.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        labId: { type: DataTypes.UUID, allowNull: false },
        email: { type: DataTypes.STRING(320), allowNull: false },
        role: { type: DataTypes.STRING(16), allowNull: false, validate: { isIn: [LAB_ROLES] } },
        tokenHash: { type: DataTypes.STRING(64), allowNull: false, unique: true },
        expiresAt: { type: DataTypes.DATE, allowNull: false },
        acceptedAt: { type: DataTypes.DATE, allowNull: true },
        invitedById: { type: DataTypes.UUID, allowNull: true },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'invitations', underscored: true },
    );
  }
}
