import type { RunComparison } from '../../../shared/api/cases';
import {
  DataTypes,
  Model,
  type CreationOptional,
  type InferAttributes,
  type InferCreationAttributes,
  type NonAttribute,
  type Sequelize,
} from 'sequelize';
import type { User } from './user';

/** A reviewer's verdict on a revision after rerunning its runs, with the numbers compared. */
export class Recheck extends Model<InferAttributes<Recheck>, InferCreationAttributes<Recheck>> {
  declare id: CreationOptional<string>;
  declare revisionId: string;
  declare reviewerId: string | null;
  declare state: 'confirmed' | 'disputed';
  /** every compared run's result digest matched */
  declare digestMatch: boolean;
  /** as the reviewer sent them, checked by recheckBodySchema */
  declare comparisons: RunComparison[];
  declare comment: string;
  declare createdAt: CreationOptional<Date>;
  declare reviewer?: NonAttribute<User | null>;

  static initModel(sequelize: Sequelize): void {
    Recheck.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        revisionId: { type: DataTypes.UUID, allowNull: false },
        reviewerId: { type: DataTypes.UUID, allowNull: true },
        state: { type: DataTypes.STRING(20), allowNull: false, validate: { isIn: [['confirmed', 'disputed']] } },
        digestMatch: { type: DataTypes.BOOLEAN, allowNull: false },
        comparisons: { type: DataTypes.JSONB, allowNull: false },
        comment: { type: DataTypes.TEXT, allowNull: false },
        createdAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'rechecks', underscored: true, updatedAt: false },
    );
  }
}
