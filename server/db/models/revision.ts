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

/** Columns a revision may still change after it is saved (the database trigger enforces the same). */
const MUTABLE = new Set(['recheckState', 'recheckRequestedById', 'recheckReviewerId', 'recheckMessage', 'recheckRequestedAt']);

/** An immutable version of a case: canonical parameters and their digest. Only its recheck columns move. */
export class Revision extends Model<InferAttributes<Revision>, InferCreationAttributes<Revision>> {
  declare id: CreationOptional<string>;
  declare caseId: string;
  declare number: number;
  declare params: Record<string, unknown>;
  declare schemaVersion: number;
  declare paramsDigest: string;
  declare note: CreationOptional<string>;
  declare authorId: string | null;
  declare recheckState: CreationOptional<RecheckState>;
  declare recheckRequestedById: CreationOptional<string | null>;
  declare recheckReviewerId: CreationOptional<string | null>;
  declare recheckMessage: CreationOptional<string | null>;
  declare recheckRequestedAt: CreationOptional<Date | null>;
  declare createdAt: CreationOptional<Date>;
  declare author?: NonAttribute<User | null>;

  static initModel(sequelize: Sequelize): void {
    Revision.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        caseId: { type: DataTypes.UUID, allowNull: false },
        number: { type: DataTypes.INTEGER, allowNull: false },
        params: { type: DataTypes.JSONB, allowNull: false },
        schemaVersion: { type: DataTypes.INTEGER, allowNull: false },
        paramsDigest: { type: DataTypes.STRING(64), allowNull: false },
        note: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
        authorId: { type: DataTypes.UUID, allowNull: true },
        recheckState: { type: DataTypes.STRING(20), allowNull: false, defaultValue: 'draft', validate: { isIn: [RECHECK_STATES] } },
        recheckRequestedById: { type: DataTypes.UUID, allowNull: true },
        recheckReviewerId: { type: DataTypes.UUID, allowNull: true },
        recheckMessage: { type: DataTypes.TEXT, allowNull: true },
        recheckRequestedAt: { type: DataTypes.DATE, allowNull: true },
        createdAt: DataTypes.DATE,
      },
      {
        sequelize,
        tableName: 'revisions',
        underscored: true,
        updatedAt: false,
        hooks: {
          beforeUpdate: (revision) => {
            const changed = revision.changed();
            const frozen = Array.isArray(changed) ? changed.filter((key) => !MUTABLE.has(key)) : [];
            if (frozen.length > 0) throw new Error(`revisions are append-only: ${frozen.join(', ')} cannot change`);
          },
          beforeDestroy: () => {
            throw new Error('revisions are append-only: they cannot be deleted');
          },
        },
      },
    );
  }
}
