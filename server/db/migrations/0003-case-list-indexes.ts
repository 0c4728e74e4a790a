/**
 * Indexes for the case list (GET /api/labs/:labId/cases) at lab scale:
 * - cases_lab_live_updated: (lab_id, archived, updated_at DESC, id) serves the default page in index order and
 *   its total as an index-only count (the tag filter has cases_tags_gin from 0002);
 * - cases_title_trgm / cases_tags_trgm: pg_trgm GIN indexes for the substring search (ILIKE '%text%') on the title
 *   and on the tags joined by spaces. array_to_string is only STABLE, so the tags text goes through qp_tags_text,
 *   declared IMMUTABLE (true for varchar[]: its text form depends on no setting).
 * pg_trgm ships with PostgreSQL (Debian's server package) and is a trusted extension, so the database owner may
 * create it.
 */
import type { Migration } from '../migrator';

export const up: Migration = async ({ context: { queryInterface: qi, transaction } }) => {
  await qi.sequelize.query('CREATE EXTENSION IF NOT EXISTS pg_trgm', { transaction });
  await qi.sequelize.query(
    "CREATE FUNCTION qp_tags_text(tags varchar[]) RETURNS text LANGUAGE sql IMMUTABLE PARALLEL SAFE AS $$ SELECT array_to_string(tags, ' ') $$",
    { transaction },
  );
  await qi.sequelize.query('CREATE INDEX cases_lab_live_updated ON cases (lab_id, archived, updated_at DESC, id)', { transaction });
  await qi.sequelize.query('DROP INDEX cases_lab_id_updated_at', { transaction });
  await qi.sequelize.query('CREATE INDEX cases_title_trgm ON cases USING gin (title gin_trgm_ops)', { transaction });
  await qi.sequelize.query('CREATE INDEX cases_tags_trgm ON cases USING gin (qp_tags_text(tags) gin_trgm_ops)', { transaction });
};

export const down: Migration = async ({ context: { queryInterface: qi, transaction } }) => {
  for (const index of ['cases_tags_trgm', 'cases_title_trgm', 'cases_lab_live_updated']) {
    await qi.sequelize.query(`DROP INDEX ${index}`, { transaction });
  }
  await qi.sequelize.query('CREATE INDEX cases_lab_id_updated_at ON cases (lab_id, updated_at)', { transaction });
  await qi.sequelize.query('DROP FUNCTION qp_tags_text(varchar[])', { transaction });
  // The extension stays: other objects may use it, and the next up finds it with IF NOT EXISTS.
};
