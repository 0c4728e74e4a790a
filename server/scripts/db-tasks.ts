/**
 * Database chores shared by the scripts: recreate a database, migrate it, seed it.
 */
import { Sequelize } from 'sequelize';
import { migrateUp } from '../db/migrator';
import { assertDemoSeedAllowed, seedDemo } from '../db/seed';
import { createSequelize } from '../db/sequelize';
import { config } from '../config';
import { withDatabase } from '../paths';

/** Drops and creates `database` on the server of `url`, as the role in `url` (it needs CREATEDB). */
export async function recreateDatabase(url: string, database: string): Promise<string> {
  if (!/^[a-z_][a-z0-9_]*$/.test(database)) throw new Error(`bad database name ${database}`);
  const admin = new Sequelize(withDatabase(url, 'postgres'), { dialect: 'postgres', logging: false });
  try {
    await admin.query(`DROP DATABASE IF EXISTS ${database} WITH (FORCE)`);
    await admin.query(`CREATE DATABASE ${database}`);
  } finally {
    await admin.close();
  }
  return withDatabase(url, database);
}

/** Migrates (and optionally seeds) the database at `url`; returns what it did. */
export async function prepareDatabase(url: string, options: { seed: boolean }): Promise<{ migrations: string[]; seeded: number }> {
  if (options.seed) assertDemoSeedAllowed(config(), ['1', 'true', 'yes'].includes((process.env['QP_SEED_FORCE'] ?? '').toLowerCase()));
  const sequelize = createSequelize(url, { poolMax: 2 });
  try {
    const migrations = await migrateUp(sequelize);
    const seeded = options.seed ? (await seedDemo(sequelize)).created : 0;
    return { migrations, seeded };
  } finally {
    await sequelize.close();
  }
}
