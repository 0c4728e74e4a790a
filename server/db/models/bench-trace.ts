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

/** Parsed series of a bench trace, SI: time in s, angle in rad, pivot position in m (when the file had it). */
export interface TraceSeries {
  time: number[];
  angle: number[];
  pivot?: number[];
}

/** A measured trace uploaded to a case: the original CSV (for download) and its parsed series. */
export class BenchTrace extends Model<InferAttributes<BenchTrace>, InferCreationAttributes<BenchTrace>> {
  declare id: CreationOptional<string>;
  declare caseId: string;
  declare label: string;
  declare fileName: string;
  declare sizeBytes: number;
  declare rows: number;
  declare columns: string[];
  declare angleUnit: 'deg' | 'rad';
  /** s, last time minus first */
  declare duration: number;
  declare series: TraceSeries;
  declare csv: string;
  declare authorId: string | null;
  declare createdAt: CreationOptional<Date>;
  declare author?: NonAttribute<User | null>;

  static initModel(sequelize: Sequelize): void {
    BenchTrace.init(
      {
        id: { type: DataTypes.UUID, defaultValue: DataTypes.UUIDV4, primaryKey: true },
        caseId: { type: DataTypes.UUID, allowNull: false },
        label: { type: DataTypes.STRING(200), allowNull: false },
        fileName: { type: DataTypes.STRING(255), allowNull: false },
        sizeBytes: { type: DataTypes.INTEGER, allowNull: false },
        rows: { type: DataTypes.INTEGER, allowNull: false },
        columns: { type: DataTypes.ARRAY(DataTypes.STRING(40)), allowNull: false },
        angleUnit: { type: DataTypes.STRING(8), allowNull: false, validate: { isIn: [['deg', 'rad']] } },
        duration: { type: DataTypes.DOUBLE, allowNull: false },
        series: { type: DataTypes.JSONB, allowNull: false },
        csv: { type: DataTypes.TEXT, allowNull: false },
        authorId: { type: DataTypes.UUID, allowNull: true },
        createdAt: DataTypes.DATE,
      },
      { sequelize, tableName: 'bench_traces', underscored: true, updatedAt: false },
    );
  }
}
