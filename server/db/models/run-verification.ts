import {
  DataTypes,
  Model,
  type CreationOptional,
  type InferAttributes,
  type InferCreationAttributes,
  type Sequelize,
} from 'sequelize';
import type { RunComparison } from '../../../shared/api';

export const VERIFICATION_STATES = ['pending', 'verified', 'unreproduced'] as const;
export type VerificationState = (typeof VERIFICATION_STATES)[number];

const appendOnly = () => {
  throw new Error('run results are append-only: they cannot be changed or deleted');
};

/**
 * The server's verification of one stored run (table run_results, append-only, at most one row a run): its own
 * summary and digest, the comparison with the posted claim, and its full result, gzip-compressed.
 */
export class RunVerification extends Model<InferAttributes<RunVerification>, InferCreationAttributes<RunVerification>> {
  declare runId: string;
  declare state: Exclude<VerificationState, 'pending'>;
  declare summary: Record<string, number | string | boolean | null> | null;
  declare resultDigest: string | null;
  declare engineVersion: string;
  declare comparison: RunComparison | null;
  declare failure: string | null;
  declare encoding: string | null;
  declare compressed: Buffer | null;
  declare rawBytes: number;
  declare compressedBytes: number;
  declare createdAt: CreationOptional<Date>;

  static initModel(sequelize: Sequelize): void {
    RunVerification.init(
      {
        runId: { type: DataTypes.UUID, primaryKey: true },
        state: { type: DataTypes.STRING(16), allowNull: false },
        summary: { type: DataTypes.JSONB, allowNull: true },
        resultDigest: { type: DataTypes.STRING(64), allowNull: true },
        engineVersion: { type: DataTypes.STRING(64), allowNull: false },
        comparison: { type: DataTypes.JSONB, allowNull: true },
        failure: { type: DataTypes.TEXT, allowNull: true },
        encoding: { type: DataTypes.STRING(32), allowNull: true },
        compressed: { type: DataTypes.BLOB, allowNull: true },
        rawBytes: { type: DataTypes.INTEGER, allowNull: false },
        compressedBytes: { type: DataTypes.INTEGER, allowNull: false },
        createdAt: DataTypes.DATE,
      },
      {
        sequelize,
        tableName: 'run_results',
        underscored: true,
        updatedAt: false,
        hooks: { beforeUpdate: appendOnly, beforeDestroy: appendOnly, beforeBulkUpdate: appendOnly, beforeBulkDestroy: appendOnly },
      },
    );
  }
}
