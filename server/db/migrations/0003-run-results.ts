/**
 * The server's verification of each stored run and the full result it computed (issue: stored results).
 *
 * A run is `pending` while it has no row here; its verification writes exactly one row, `verified` or
 * `unreproduced`, with the server's own summary, digest and engine version, the comparison with what the browser
 * posted, and the server's full result: `encoding` names the text form (shared/engine/result-codec.ts), `compressed`
 * holds that text gzip-compressed, `raw_bytes`/`compressed_bytes` its sizes (limits in server/services/result-store.ts).
 * Append-only like runs: no update, no delete (cascaded deletes from a removed lab still go through).
 */
import { DataTypes } from 'sequelize';
import type { Migration } from '../migrator';

const TRIGGER = `
CREATE FUNCTION qp_run_results_append_only() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'DELETE' AND pg_trigger_depth() > 1 THEN RETURN OLD; END IF;
  RAISE EXCEPTION 'run results are append-only: % refused', TG_OP USING ERRCODE = 'restrict_violation';
END $$;
CREATE TRIGGER run_results_append_only BEFORE UPDATE OR DELETE ON run_results FOR EACH ROW EXECUTE FUNCTION qp_run_results_append_only();
`;

export const up: Migration = async ({ context: { queryInterface: qi, transaction } }) => {
  await qi.createTable(
    'run_results',
    {
      run_id: { type: DataTypes.UUID, primaryKey: true, allowNull: false, references: { model: 'runs', key: 'id' }, onDelete: 'CASCADE' },
      state: { type: DataTypes.STRING(16), allowNull: false },
      summary: { type: DataTypes.JSONB, allowNull: true },
      result_digest: { type: DataTypes.STRING(64), allowNull: true },
      engine_version: { type: DataTypes.STRING(64), allowNull: false },
      comparison: { type: DataTypes.JSONB, allowNull: true },
      failure: { type: DataTypes.TEXT, allowNull: true },
      encoding: { type: DataTypes.STRING(32), allowNull: true },
      compressed: { type: DataTypes.BLOB, allowNull: true },
      raw_bytes: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      compressed_bytes: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      created_at: { type: DataTypes.DATE, allowNull: false },
    },
    { transaction },
  );
  const sql = (text: string) => qi.sequelize.query(text, { transaction });
  await sql("ALTER TABLE run_results ADD CONSTRAINT run_results_state_check CHECK (state IN ('verified', 'unreproduced'))");
  await sql("ALTER TABLE run_results ADD CONSTRAINT run_results_verified_complete CHECK (state <> 'verified' OR (compressed IS NOT NULL AND result_digest IS NOT NULL))");
  await sql(TRIGGER);
};

export const down: Migration = async ({ context: { queryInterface: qi, transaction } }) => {
  await qi.dropTable('run_results', { transaction });
  await qi.sequelize.query('DROP FUNCTION IF EXISTS qp_run_results_append_only();', { transaction });
};
