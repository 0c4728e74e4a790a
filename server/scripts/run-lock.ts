/**
 * A PostgreSQL advisory lock held for the length of a test run, so two runs on one checkout that recreate the same
 * database wait for each other instead of dropping it under each other.
 */
import { Sequelize } from 'sequelize';
import { withDatabase } from '../paths';

export interface RunLock {
  release(): Promise<void>;
}

export async function holdRunLock(serverUrl: string, name: string, log: (line: string) => void): Promise<RunLock> {
  // One pinned connection: advisory locks belong to the session that took them.
  const holder = new Sequelize(withDatabase(serverUrl, 'postgres'), {
    dialect: 'postgres',
    logging: false,
    pool: { max: 1, min: 1, idle: 24 * 3_600_000, evict: 24 * 3_600_000 },
  });
  const key = { replacements: { name } };
  const [rows] = await holder.query('SELECT pg_try_advisory_lock(hashtext(:name)) AS got', key);
  if (!(rows as Array<{ got: boolean }>)[0]?.got) {
    log(`another run is using ${name}; waiting for it to finish`);
    await holder.query('SELECT pg_advisory_lock(hashtext(:name))', key);
  }
  return { release: () => holder.close() };
}
