import {
  DataTypes,
  Model,
  type CreationOptional,
  type InferAttributes,
  type InferCreationAttributes,
  type NonAttribute,
  type Sequelize,
} from 'sequelize';
import { RECHECK_STATES, type RecheckState } from './recheck-states';
import type { User } from './user';

/** A stored scenario of a lab; its numbers live in its revisions. `latestRevision` and `recheckState` mirror the newest revision. */
export class CaseRecord extends Model<InferAttributes<CaseRecord>, InferCreationAttributes<CaseRecord>> {
  declare id: CreationOptional<string>;
  declare labId: string;
  declare title: string;
  declare tags: CreationOptional<string[]>;
  declare authorId: string | null;
  declare latestRevision: CreationOptional<number>;
  declare recheckState: CreationOptional<RecheckState>;
  declare archived: CreationOptional<boolean>;
  declare createdAt: CreationOptional<Date>;
  declare updatedAt: CreationOptional<Date>;
  declare author?: NonAttribute<User | null>;

  static initModel(sequelize: Sequelize): void {
    CaseRecord.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        labId: { type: DataTypes.UUID, allowNull: false },
        title: { type: DataTypes.STRING(200), allowNull: false },
        tags: { type: DataTypes.ARRAY(DataTypes.STRING(40)), allowNull: false, defaultValue: [] },
        authorId: { type: DataTypes.UUID, allowNull: true },
        latestRevision: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
        recheckState: { type: DataTypes.STRING(20), allowNull: false, defaultValue: 'draft', validate: { isIn: [RECHECK_STATES] } },
        archived: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
        createdAt: DataTypes.DATE,
        updatedAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'cases', underscored: true },
    );
  }
}
