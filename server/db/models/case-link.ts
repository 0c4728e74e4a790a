import {
  DataTypes,
  Model,
  type CreationOptional,
  type InferAttributes,
  type InferCreationAttributes,
  type NonAttribute,
  type Sequelize,
} from 'sequelize';
import type { Revision } from './revision';

/** A read-only link to one revision for people outside the lab. Only the token's SHA-256 is kept. */
export class CaseLink extends Model<InferAttributes<CaseLink>, InferCreationAttributes<CaseLink>> {
  declare id: CreationOptional<string>;
  declare caseId: string;
  declare revisionId: string;
  declare tokenHash: string;
  declare expiresAt: Date;
  declare revokedAt: CreationOptional<Date | null>;
  declare createdById: string | null;
  declare createdAt: CreationOptional<Date>;
  declare revision?: NonAttribute<Revision>;

  static initModel(sequelize: Sequelize): void {
    CaseLink.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        caseId: { type: DataTypes.UUID, allowNull: false },
        revisionId: { type: DataTypes.UUID, allowNull: false },
        tokenHash: { type: DataTypes.STRING(64), allowNull: false, unique: true },
        expiresAt: { type: DataTypes.DATE, allowNull: false },
        revokedAt: { type: DataTypes.DATE, allowNull: true },
        createdById: { type: DataTypes.UUID, allowNull: true },
        createdAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'case_links', underscored: true, updatedAt: false },
    );
  }
}
