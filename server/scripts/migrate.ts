/**
 * `npm run db:migrate [-- down]`: applies pending migrations to DATABASE_URL (default: the private cluster's
 * `quiverpoint`), or with `down` reverts the last one.
 */
import { config } from '../config';
import { createMigrator } from '../db/migrator';
import { createSequelize } from '../db/sequelize';

async function main(): Promise<void> {
  const sequelize = createSequelize(config().databaseUrl, { poolMax: 2 });
  try {
    const migrator = createMigrator(sequelize);
    if (process.argv[2] === 'down') {
      const reverted = await migrator.down();
      console.log(reverted.length ? `reverted ${reverted.map((m) => m.name).join(', ')}` : 'nothing to revert');
    } else {
      const applied = await migrator.up();
      console.log(applied.length ? `applied ${applied.map((m) => m.name).join(', ')}` : 'schema up to date');
    }
  } finally {
    await sequelize.close();
  }
}

main().catch((err: unknown) => {
  console.error(err instanceof Error ? err.message : err);
  process.exitCode = 1;
});
