/**
 * For browser tests: a fresh, migrated and seeded `quiverpoint_e2e` database and the production server (built
 * client, mail sink inside) on free ports. Call `stop()` in afterAll.
 *
 * Uses the TypeScript sources through tsx by default; `QP_E2E_SERVER=compiled` (set by `npm test`, which has just
 * built it) runs dist/server instead. The Angular app must be built (`npx ng build`).
 */
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { DEMO_ACCOUNTS, DEMO_LAB_NAME } from '../../../server/db/seed';
import { checkoutPaths } from '../../../server/paths';
import { prepareDatabase, recreateDatabase } from '../../../server/scripts/db-tasks';
import { ensurePostgres, stopPostgres } from '../../../server/scripts/pg';
import { holdRunLock } from '../../../server/scripts/run-lock';
import { freePort, startServerProcess, startWorkerProcess, type WorkerProcess } from '../../../server/scripts/server-process';

export { DEMO_ACCOUNTS, DEMO_LAB_NAME };

export interface E2eServer {
  baseUrl: string;
  databaseUrl: string;
  smtpPort: number;
  stop(): Promise<void>;
}

/**
 * `database` defaults to `quiverpoint_e2e`; starting drops and recreates it, so another run (or a parallel test
 * file) using the same name waits until this one calls stop(). Parallel files should pass their own names.
 * `workers` starts that many job worker processes beside the server (none by default: jobs then stay queued).
 */
export async function startE2eServer(options: { database?: string; workers?: number } = {}): Promise<E2eServer> {
  const { repoRoot } = checkoutPaths();
  if (!existsSync(join(repoRoot, 'dist', 'quiverpoint', 'browser', 'index.html'))) {
    throw new Error('the web client is not built: run `npx ng build` first');
  }
  const cluster = await ensurePostgres({ fsync: false, databases: [], log: () => undefined });
  const database = options.database ?? 'quiverpoint_e2e';
  const lock = await holdRunLock(cluster.url, database, (line) => console.log(`[e2e] ${line}`));
  const release = async () => {
    await lock.release();
    if (cluster.startedNow) stopPostgres(() => undefined);
  };
  try {
    const databaseUrl = await recreateDatabase(cluster.url, database);
    await prepareDatabase(databaseUrl, { seed: true });
    const [port, smtpPort] = [await freePort(), await freePort()];
    const mode = process.env['QP_E2E_SERVER'] === 'compiled' ? 'compiled' : 'tsx';
    const env = {
      ...process.env,
      NODE_ENV: 'production',
      DATABASE_URL: databaseUrl,
      QP_MAIL_SINK: 'true',
      QP_SMTP_PORT: String(smtpPort),
      QP_PUBLIC_URL: `http://127.0.0.1:${port}`,
      QP_SIGNIN_LIMIT: '1000',
      LOG_LEVEL: process.env['LOG_LEVEL'] ?? 'warn',
    };
    const server = await startServerProcess({ repoRoot, mode, port, env });
    // Workers start after the server, which has created the job queue's tables.
    const workers: WorkerProcess[] = [];
    try {
      for (let i = 0; i < (options.workers ?? 0); i++) workers.push(await startWorkerProcess({ repoRoot, mode, env }));
    } catch (err) {
      await Promise.all(workers.map((w) => w.stop()));
      await server.stop();
      throw err;
    }
    return {
      baseUrl: server.baseUrl,
      databaseUrl,
      smtpPort,
      stop: async () => {
        await Promise.all(workers.map((w) => w.stop()));
        await server.stop();
        await release();
      },
    };
  } catch (err) {
    await release();
    throw err;
  }
}
