/**
 * A version number per lab's library, bumped by the database itself whenever what the case list shows changes: a
 * case inserted, updated or deleted (title, tags, revision, recheck state, archive, author), or an author renamed.
 * The API keeps case-list pages in memory under (lab, version, query) and reads the version with the caller's
 * memberships, so a repeated page costs no query and every app instance sees a change at once (the count lives in
 * PostgreSQL, not in a process). Row triggers: each case write also locks its lab's row until commit, which
 * orders concurrent writes to one lab; a library is written a few times a minute, read far more often.
 */
import type { Migration } from '../migrator';

export const up: Migration = async ({ context: { queryInterface: qi, transaction } }) => {
  const sql = (text: string) => qi.sequelize.query(text, { transaction });
  await sql('ALTER TABLE labs ADD COLUMN library_version bigint NOT NULL DEFAULT 0');
  await sql(`CREATE FUNCTION qp_bump_library_version() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      IF TG_OP <> 'INSERT' THEN
        UPDATE labs SET library_version = library_version + 1 WHERE id = OLD.lab_id;
      END IF;
      IF TG_OP <> 'DELETE' AND (TG_OP = 'INSERT' OR NEW.lab_id IS DISTINCT FROM OLD.lab_id) THEN
        UPDATE labs SET library_version = library_version + 1 WHERE id = NEW.lab_id;
      END IF;
      RETURN NULL;
    END $$`);
  await sql(`CREATE TRIGGER cases_bump_library_version AFTER INSERT OR UPDATE OR DELETE ON cases
    FOR EACH ROW EXECUTE FUNCTION qp_bump_library_version()`);
  await sql(`CREATE FUNCTION qp_bump_author_libraries() RETURNS trigger LANGUAGE plpgsql AS $$
    BEGIN
      UPDATE labs SET library_version = library_version + 1 WHERE id IN (SELECT lab_id FROM cases WHERE author_id = NEW.id);
      RETURN NULL;
    END $$`);
  await sql(`CREATE TRIGGER users_bump_library_version AFTER UPDATE OF name ON users
    FOR EACH ROW WHEN (OLD.name IS DISTINCT FROM NEW.name) EXECUTE FUNCTION qp_bump_author_libraries()`);
};

export const down: Migration = async ({ context: { queryInterface: qi, transaction } }) => {
  const sql = (text: string) => qi.sequelize.query(text, { transaction });
  await sql('DROP TRIGGER users_bump_library_version ON users');
  await sql('DROP FUNCTION qp_bump_author_libraries()');
  await sql('DROP TRIGGER cases_bump_library_version ON cases');
  await sql('DROP FUNCTION qp_bump_library_version()');
  await sql('ALTER TABLE labs DROP COLUMN library_version');
};
