/**
 * The case library: cases, revisions, runs, rechecks, comments, case links, bench traces and the mail outbox.
 * Revisions and runs are append-only, enforced by triggers (only a revision's recheck columns may change; cascaded
 * deletes from a removed lab still go through).
 */
import { DataTypes } from 'sequelize';
import type { Migration } from '../migrator';

const id = { type: DataTypes.UUID, primaryKey: true, allowNull: false, defaultValue: DataTypes.UUIDV4 };
const createdAt = { created_at: { type: DataTypes.DATE, allowNull: false } };
const stamps = { ...createdAt, updated_at: { type: DataTypes.DATE, allowNull: false } };
const ref = (table: string, onDelete: 'CASCADE' | 'SET NULL', allowNull = false) => ({
  type: DataTypes.UUID,
  allowNull,
  references: { model: table, key: 'id' },
  onDelete,
});
const RECHECK_STATES = "('draft', 'awaiting-recheck', 'confirmed', 'disputed')";

const TRIGGERS = `
CREATE FUNCTION qp_revisions_append_only() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'DELETE' THEN
    IF pg_trigger_depth() > 1 THEN RETURN OLD; END IF;
    RAISE EXCEPTION 'revisions are append-only: % refused', TG_OP USING ERRCODE = 'restrict_violation';
  END IF;
  IF NEW.id IS DISTINCT FROM OLD.id OR NEW.case_id IS DISTINCT FROM OLD.case_id OR NEW.number IS DISTINCT FROM OLD.number
     OR NEW.params IS DISTINCT FROM OLD.params OR NEW.schema_version IS DISTINCT FROM OLD.schema_version
     OR NEW.params_digest IS DISTINCT FROM OLD.params_digest OR NEW.note IS DISTINCT FROM OLD.note
     OR NEW.author_id IS DISTINCT FROM OLD.author_id OR NEW.created_at IS DISTINCT FROM OLD.created_at THEN
    RAISE EXCEPTION 'revisions are append-only: only the recheck columns may change' USING ERRCODE = 'restrict_violation';
  END IF;
  RETURN NEW;
END $$;
CREATE TRIGGER revisions_append_only BEFORE UPDATE OR DELETE ON revisions FOR EACH ROW EXECUTE FUNCTION qp_revisions_append_only();

CREATE FUNCTION qp_runs_append_only() RETURNS trigger LANGUAGE plpgsql AS $$
BEGIN
  IF TG_OP = 'DELETE' AND pg_trigger_depth() > 1 THEN RETURN OLD; END IF;
  RAISE EXCEPTION 'runs are append-only: % refused', TG_OP USING ERRCODE = 'restrict_violation';
END $$;
CREATE TRIGGER runs_append_only BEFORE UPDATE OR DELETE ON runs FOR EACH ROW EXECUTE FUNCTION qp_runs_append_only();
`;

export const up: Migration = async ({ context: { queryInterface: qi, transaction } }) => {
  const sql = (text: string) => qi.sequelize.query(text, { transaction });

  await qi.createTable(
    'cases',
    {
      id,
      lab_id: ref('labs', 'CASCADE'),
      title: { type: DataTypes.STRING(200), allowNull: false },
      tags: { type: DataTypes.ARRAY(DataTypes.STRING(40)), allowNull: false, defaultValue: [] },
      author_id: ref('users', 'SET NULL', true),
      latest_revision: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      recheck_state: { type: DataTypes.STRING(20), allowNull: false, defaultValue: 'draft' },
      archived: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
      ...stamps,
    },
    { transaction },
  );
  await qi.addIndex('cases', ['lab_id', 'updated_at'], { transaction });
  await sql('CREATE INDEX cases_tags_gin ON cases USING gin (tags)');
  await sql(`ALTER TABLE cases ADD CONSTRAINT cases_recheck_state_check CHECK (recheck_state IN ${RECHECK_STATES})`);

  await qi.createTable(
    'revisions',
    {
      id,
      case_id: ref('cases', 'CASCADE'),
      number: { type: DataTypes.INTEGER, allowNull: false },
      params: { type: DataTypes.JSONB, allowNull: false },
      schema_version: { type: DataTypes.INTEGER, allowNull: false },
      params_digest: { type: DataTypes.STRING(64), allowNull: false },
      note: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      author_id: ref('users', 'SET NULL', true),
      recheck_state: { type: DataTypes.STRING(20), allowNull: false, defaultValue: 'draft' },
      recheck_requested_by_id: ref('users', 'SET NULL', true),
      recheck_reviewer_id: ref('users', 'SET NULL', true),
      recheck_message: { type: DataTypes.TEXT, allowNull: true },
      recheck_requested_at: { type: DataTypes.DATE, allowNull: true },
      ...createdAt,
    },
    { transaction },
  );
  await qi.addIndex('revisions', ['case_id', 'number'], { unique: true, name: 'revisions_case_number_unique', transaction });
  await sql(`ALTER TABLE revisions ADD CONSTRAINT revisions_recheck_state_check CHECK (recheck_state IN ${RECHECK_STATES})`);
  await sql('ALTER TABLE revisions ADD CONSTRAINT revisions_number_positive CHECK (number >= 1)');

  await qi.createTable(
    'runs',
    {
      id,
      revision_id: ref('revisions', 'CASCADE'),
      kind: { type: DataTypes.STRING(16), allowNull: false },
      settings: { type: DataTypes.JSONB, allowNull: false },
      summary: { type: DataTypes.JSONB, allowNull: false },
      result_digest: { type: DataTypes.STRING(64), allowNull: false },
      engine_version: { type: DataTypes.STRING(64), allowNull: false },
      author_id: ref('users', 'SET NULL', true),
      ...createdAt,
    },
    { transaction },
  );
  await qi.addIndex('runs', ['revision_id', 'created_at'], { transaction });

  await qi.createTable(
    'rechecks',
    {
      id,
      revision_id: ref('revisions', 'CASCADE'),
      reviewer_id: ref('users', 'SET NULL', true),
      state: { type: DataTypes.STRING(20), allowNull: false },
      digest_match: { type: DataTypes.BOOLEAN, allowNull: false },
      comparisons: { type: DataTypes.JSONB, allowNull: false },
      comment: { type: DataTypes.TEXT, allowNull: false },
      ...createdAt,
    },
    { transaction },
  );
  await qi.addIndex('rechecks', ['revision_id', 'created_at'], { transaction });
  await sql("ALTER TABLE rechecks ADD CONSTRAINT rechecks_state_check CHECK (state IN ('confirmed', 'disputed'))");

  await qi.createTable(
    'comments',
    {
      id,
      revision_id: ref('revisions', 'CASCADE'),
      author_id: ref('users', 'SET NULL', true),
      body: { type: DataTypes.TEXT, allowNull: false },
      ...createdAt,
    },
    { transaction },
  );
  await qi.addIndex('comments', ['revision_id', 'created_at'], { transaction });

  await qi.createTable(
    'case_links',
    {
      id,
      case_id: ref('cases', 'CASCADE'),
      revision_id: ref('revisions', 'CASCADE'),
      token_hash: { type: DataTypes.STRING(64), allowNull: false, unique: true },
      expires_at: { type: DataTypes.DATE, allowNull: false },
      revoked_at: { type: DataTypes.DATE, allowNull: true },
      created_by_id: ref('users', 'SET NULL', true),
      ...createdAt,
    },
    { transaction },
  );
  await qi.addIndex('case_links', ['case_id', 'created_at'], { transaction });

  await qi.createTable(
    'bench_traces',
    {
      id,
      case_id: ref('cases', 'CASCADE'),
      label: { type: DataTypes.STRING(200), allowNull: false },
      file_name: { type: DataTypes.STRING(255), allowNull: false },
      size_bytes: { type: DataTypes.INTEGER, allowNull: false },
      rows: { type: DataTypes.INTEGER, allowNull: false },
      columns: { type: DataTypes.ARRAY(DataTypes.STRING(40)), allowNull: false },
      angle_unit: { type: DataTypes.STRING(8), allowNull: false },
      duration: { type: DataTypes.DOUBLE, allowNull: false },
      series: { type: DataTypes.JSONB, allowNull: false },
      csv: { type: DataTypes.TEXT, allowNull: false },
      author_id: ref('users', 'SET NULL', true),
      ...createdAt,
    },
    { transaction },
  );
  await qi.addIndex('bench_traces', ['case_id', 'created_at'], { transaction });
  await sql("ALTER TABLE bench_traces ADD CONSTRAINT bench_traces_angle_unit_check CHECK (angle_unit IN ('deg', 'rad'))");

  await qi.createTable(
    'outbox',
    {
      id: { type: DataTypes.BIGINT, autoIncrement: true, primaryKey: true },
      to_address: { type: DataTypes.STRING(320), allowNull: false },
      subject: { type: DataTypes.TEXT, allowNull: false },
      text_body: { type: DataTypes.TEXT, allowNull: false },
      html_body: { type: DataTypes.TEXT, allowNull: true },
      attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      next_attempt_at: { type: DataTypes.DATE, allowNull: true },
      last_error: { type: DataTypes.TEXT, allowNull: true },
      sent_at: { type: DataTypes.DATE, allowNull: true },
      ...createdAt,
    },
    { transaction },
  );
  await sql('CREATE INDEX outbox_due ON outbox (next_attempt_at) WHERE sent_at IS NULL');

  await sql("CREATE INDEX audit_events_case ON audit_events ((details->>'caseId'), id)");
  await sql(TRIGGERS);
};

export const down: Migration = async ({ context: { queryInterface: qi, transaction } }) => {
  await qi.sequelize.query('DROP INDEX IF EXISTS audit_events_case', { transaction });
  for (const table of ['outbox', 'bench_traces', 'case_links', 'comments', 'rechecks', 'runs', 'revisions', 'cases']) {
    await qi.dropTable(table, { transaction });
  }
  await qi.sequelize.query('DROP FUNCTION IF EXISTS qp_runs_append_only(); DROP FUNCTION IF EXISTS qp_revisions_append_only();', { transaction });
};
