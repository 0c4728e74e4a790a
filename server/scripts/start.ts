/**
 * `npm start`: the whole app on this machine. Ensures the private PostgreSQL, migrates and seeds `quiverpoint`,
 * builds the client and the server, then serves the production build with the local mail sink and one job worker
 * process (QP_START_WORKERS=0 starts none; more machines add workers with `npm run worker`). Ctrl-C stops the
 * server (and the database cluster if this run started it); data stays for the next run.
 *
 * QP_SKIP_BUILD=1 reuses the existing builds.
 */
import { config } from '../config';
import { DEMO_ACCOUNTS } from '../db/seed';
import { checkoutPaths } from '../paths';
import { prepareDatabase } from './db-tasks';
import { ensurePostgres, stopPostgres } from './pg';
import { startServerProcess, startWorkerProcess, type ServerProcess, type WorkerProcess } from './server-process';
import { runCommand } from './steps';

async function main(): Promise<void> {
  const { repoRoot } = checkoutPaths();
  const cfg = config();
  const cluster = await ensurePostgres({ databases: ['quiverpoint'] });
  let server: ServerProcess | undefined;
  const workers: WorkerProcess[] = [];
  let stopping = false;
  const stopAll = async (code: number) => {
    if (stopping) return;
    stopping = true;
    console.log('\nstopping ...');
    await Promise.allSettled([server?.stop(), ...workers.map((w) => w.stop())]);
    if (cluster.startedNow) stopPostgres();
    process.exit(code);
  };
  process.on('SIGINT', () => void stopAll(0));
  process.on('SIGTERM', () => void stopAll(0));

  try {
    await prepareAndServe();
  } catch (err) {
    console.error(err instanceof Error ? err.message : err);
    await stopAll(1);
  }

  async function prepareAndServe(): Promise<void> {
    const { migrations, seeded } = await prepareDatabase(cluster.url, { seed: true });
    console.log(`[db] ${migrations.length ? `applied ${migrations.join(', ')}` : 'schema up to date'}; ${seeded ? `seeded ${seeded} rows` : 'demo data present'}`);

    if (!process.env['QP_SKIP_BUILD']) {
      console.log('[build] client (npx ng build)');
      if (!runCommand('npx', ['ng', 'build'], repoRoot)) throw new Error('ng build failed');
      console.log('[build] server (tsc -p server/tsconfig.json)');
      if (!runCommand('npx', ['tsc', '-p', 'server/tsconfig.json'], repoRoot)) throw new Error('server build failed');
    }

    server = await startServerProcess({
      repoRoot,
      mode: 'compiled',
      port: cfg.port,
      inheritOutput: true,
      env: { ...process.env, NODE_ENV: 'production', DATABASE_URL: cluster.url, QP_MAIL_SINK: 'true' },
    });
    server.child.once('exit', (code) => {
      if (!stopping) {
        console.error(`the server stopped unexpectedly (exit ${code})`);
        void stopAll(1);
      }
    });
    const workerCount = Number(process.env['QP_START_WORKERS'] ?? 1);
    for (let i = 0; i < workerCount; i++) {
      const worker = await startWorkerProcess({
        repoRoot,
        mode: 'compiled',
        inheritOutput: true,
        env: { ...process.env, NODE_ENV: 'production', DATABASE_URL: cluster.url },
      });
      worker.child.once('exit', (code) => {
        if (!stopping) console.error(`a job worker stopped unexpectedly (exit ${code}); server jobs wait until a worker runs (npm run worker)`);
      });
      workers.push(worker);
    }
    console.log(`\nQuiverpoint is running at http://localhost:${cfg.port}/  (Ctrl-C to stop)`);
    console.log(`job workers: ${workers.length} on this machine (add more anywhere with DATABASE_URL=... npm run worker)`);
    console.log(`local mail sink: smtp://127.0.0.1:${cfg.smtpPort} (mails stored in the sink_mails table)`);
    console.log('demo accounts (local only):');
    for (const a of DEMO_ACCOUNTS) console.log(`  ${a.role.padEnd(8)} ${a.email.padEnd(28)} ${a.password}`);
  }
}

main().catch((err: unknown) => {
  console.error(err instanceof Error ? err.message : err);
  process.exit(1);
});
