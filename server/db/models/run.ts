import type { RunView } from '../../../shared/api/cases';
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

const appendOnly = () => {
  throw new Error('runs are append-only: they cannot be changed or deleted');
};

/** One computation stored with a revision (append-only): settings, headline numbers, result digest, engine version. */
export class Run extends Model<InferAttributes<Run>, InferCreationAttributes<Run>> {
  declare id: CreationOptional<string>;
  declare revisionId: string;
  declare kind: string;
  declare settings: RunView['settings'];
  declare summary: RunView['summary'];
  declare resultDigest: string;
  declare engineVersion: string;
  declare authorId: string | null;
  declare createdAt: CreationOptional<Date>;
  declare author?: NonAttribute<User | null>;

  static initModel(sequelize: Sequelize): void {
    Run.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        revisionId: { type: DataTypes.UUID, allowNull: false },
        kind: { type: DataTypes.STRING(16), allowNull: false },
        settings: { type: DataTypes.JSONB, allowNull: false },
        summary: { type: DataTypes.JSONB, allowNull: false },
        resultDigest: { type: DataTypes.STRING(64), allowNull: false },
        engineVersion: { type: DataTypes.STRING(64), allowNull: false },
        authorId: { type: DataTypes.UUID, allowNull: true },
        createdAt: DataTypes.DATE,
      },
      {
        sequelize,
        tableName: 'runs',
        underscored: true,
        updatedAt: false,
        hooks: { beforeUpdate: appendOnly, beforeDestroy: appendOnly, beforeBulkUpdate: appendOnly, beforeBulkDestroy: appendOnly },
      },
    );
  }
}
