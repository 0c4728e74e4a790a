import { DataTypes, Model, type CreationOptional, type InferAttributes, type InferCreationAttributes, type Sequelize } from 'sequelize';

/** An access token ended by sign-out before its expiry; kept until it would have expired anyway. */
export class RevokedToken extends Model<InferAttributes<RevokedToken>, InferCreationAttributes<RevokedToken>> {
  declare jti: string;
  declare userId: string;
  declare expiresAt: Date;
  declare createdAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    RevokedToken.init(
      {
        jti: { type: DataTypes.UUID, primaryKey: true },
        userId: { type: DataTypes.UUID, allowNull: false },
        expiresAt: { type: DataTypes.DATE, allowNull: false },
        createdAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'revoked_tokens', underscored: true, updatedAt: false },
    );
  }
}
