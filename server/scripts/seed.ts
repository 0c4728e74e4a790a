/** `npm run db:seed`: migrates and seeds the demo lab and accounts into DATABASE_URL (default `quiverpoint`). */
import { config } from '../config';
import { DEMO_ACCOUNTS } from '../db/seed';
import { prepareDatabase } from './db-tasks';

prepareDatabase(config().databaseUrl, { seed: true })
  .then(({ seeded }) => {
    console.log(seeded ? `seeded ${seeded} rows` : 'demo data already present');
    for (const a of DEMO_ACCOUNTS) console.log(`  ${a.role.padEnd(8)} ${a.email} / ${a.password}`);
  })
  .catch((err: unknown) => {
    console.error(err instanceof Error ? err.message : err);
    process.exitCode = 1;
  });
