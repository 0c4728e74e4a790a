/**
 * Schema migrations with umzug. Migration files live in ./migrations as `NNNN-name.ts` (compiled to `.js` for
 * production); names are stored without the extension so a database migrated by the `.ts` sources (tsx, Vitest)
 * and by the compiled `.js` files sees the same history. Each step runs inside one transaction.
 */
import { join } from 'node:path';
import type { QueryInterface, Sequelize, Transaction } from 'sequelize';
import { SequelizeStorage, Umzug, type LogFn } from 'umzug';

export interface MigrationContext {
  queryInterface: QueryInterface;
  transaction: Transaction;
}
export type Migration = (params: { name: string; context: MigrationContext }) => Promise<void>;

interface MigrationModule {
  up: Migration;
  down: Migration;
}

function isMigrationModule(value: unknown): value is MigrationModule {
  if (typeof value !== 'object' || value === null) return false;
  const m = value as Record<string, unknown>;
  return typeof m['up'] === 'function' && typeof m['down'] === 'function';
}

/** Loads a migration through our own module loader, so `.ts` works under tsx and Vitest and `.js` when compiled. */
async function load(path: string): Promise<MigrationModule> {
  const mod: unknown = await import(path);
  if (isMigrationModule(mod)) return mod;
  const inner = typeof mod === 'object' && mod !== null ? (mod as Record<string, unknown>)['default'] : undefined;
  if (isMigrationModule(inner)) return inner;
  throw new Error(`migration ${path} must export up() and down()`);
}

export interface MigratorLogger {
  info: LogFn;
  warn: LogFn;
  error: LogFn;
  debug: LogFn;
}

export function createMigrator(sequelize: Sequelize, logger?: MigratorLogger): Umzug<Sequelize> {
  const step = (path: string, name: string, which: 'up' | 'down') => async () => {
    const mod = await load(path);
    await sequelize.transaction((transaction) => mod[which]({ name, context: { queryInterface: sequelize.getQueryInterface(), transaction } }));
  };
  return new Umzug({
    migrations: {
      glob: ['*.{ts,js}', { cwd: join(__dirname, 'migrations'), ignore: ['*.d.ts', '*.spec.ts', '*.spec.js'] }],
      resolve: ({ name, path }) => {
        if (!path) throw new Error(`migration ${name} has no file`);
        const bare = name.replace(/\.(ts|js)$/, '');
        return { name: bare, path, up: step(path, bare, 'up'), down: step(path, bare, 'down') };
      },
    },
    context: sequelize,
    storage: new SequelizeStorage({ sequelize, tableName: 'schema_migrations' }),
    logger,
  });
}

/** Applies every pending migration; returns the names applied. */
export async function migrateUp(sequelize: Sequelize, logger?: MigratorLogger): Promise<string[]> {
  const done = await createMigrator(sequelize, logger).up();
  return done.map((m) => m.name);
}
