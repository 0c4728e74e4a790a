import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { inject } from 'vitest';
import type { Sequelize } from 'sequelize';
import { createMigrator } from '../../server/db/migrator';
import { createSequelize } from '../../server/db/sequelize';
import { recreateDatabase } from '../../server/scripts/db-tasks';

let sequelize: Sequelize;

beforeAll(async () => {
  const url = await recreateDatabase(inject('databaseUrl'), 'quiverpoint_test_migrations');
  sequelize = createSequelize(url, { poolMax: 2 });
});
afterAll(() => sequelize.close());

async function tables(): Promise<string[]> {
  const [rows] = await sequelize.query("SELECT tablename FROM pg_tables WHERE schemaname = 'public' ORDER BY tablename");
  return (rows as Array<{ tablename: string }>).map((r) => r.tablename);
}

describe('migrations', () => {
  it('apply, revert completely and apply again, recording names without extensions', async () => {
    const migrator = createMigrator(sequelize);
    const applied = await migrator.up();
    expect(applied.length).toBeGreaterThan(0);
    expect(applied.every((m) => /^\d{4}-[a-z0-9-]+$/.test(m.name))).toBe(true);
    expect(await tables()).toEqual(expect.arrayContaining(['users', 'labs', 'memberships', 'invitations', 'audit_events', 'revoked_tokens']));

    await migrator.down({ to: 0 });
    expect(await tables()).toEqual(['schema_migrations']);

    const again = await migrator.up();
    expect(again.map((m) => m.name)).toEqual(applied.map((m) => m.name));
    expect(await migrator.pending()).toEqual([]);
  });

  it('refuses a role outside owner, analyst, reviewer, viewer at the database level', async () => {
    await expect(
      sequelize.query(
        "INSERT INTO memberships (id, lab_id, user_id, role, created_at, updated_at) VALUES (gen_random_uuid(), gen_random_uuid(), gen_random_uuid(), 'admin', now(), now())",
      ),
    ).rejects.toThrow(/violates/);
  });
});
