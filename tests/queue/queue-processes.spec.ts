/**
 * The job queue with real processes: PostgreSQL, the server and two worker processes (server/worker.ts) on a fresh
 * `quiverpoint_queue` database. A 20 x 20 outcome map job gives the digest of the same map computed in this process;
 * a worker killed with SIGKILL while it holds a chunk costs nothing but time (its chunk expires and the other worker
 * computes it); a server stopped and started again mid-job loses nothing.
 */
import { execFile } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { hostname, tmpdir } from 'node:os';
import { join } from 'node:path';
import { promisify } from 'node:util';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { QueryTypes, type Sequelize } from 'sequelize';
import type { JobView } from '../../shared/api';
import { templateCase, type CaseParams } from '../../shared/case';
import { computeRun, defaultRunSettings, makeRunRecord, type RunSettings } from '../../shared/engine/run-record';
import { loadConfig } from '../../server/config';
import { Lab, Membership, User } from '../../server/db/models';
import { createSequelize } from '../../server/db/sequelize';
import { checkoutPaths } from '../../server/paths';
import { prepareDatabase, recreateDatabase } from '../../server/scripts/db-tasks';
import { ensurePostgres, stopPostgres } from '../../server/scripts/pg';
import { holdRunLock } from '../../server/scripts/run-lock';
import { freePort, startServerProcess, startWorkerProcess, type ServerProcess, type WorkerProcess } from '../../server/scripts/server-process';
import { issueToken } from '../../server/services/auth-service';
import { hashPassword } from '../../server/services/passwords';

const JWT_SECRET = 'queue-test-secret-that-is-long-enough-for-hs256';
const PASSWORD = 'queue-test-password-horse';
const { repoRoot } = checkoutPaths();

let release: () => Promise<void> = async () => undefined;
let sequelize: Sequelize;
let databaseUrl: string;
let port: number;
let server: ServerProcess | undefined;
const workers: WorkerProcess[] = [];
let token: string;
let labId: string;

function env(): NodeJS.ProcessEnv {
  return {
    ...process.env,
    NODE_ENV: 'test',
    DATABASE_URL: databaseUrl,
    QP_JWT_SECRET: JWT_SECRET,
    LOG_LEVEL: 'debug',
    QP_WORKER_THREADS: '1',
    // A killed worker's chunk comes back after 20 s; the queue looks for such chunks every second.
    QP_CHUNK_TIMEOUT_SECONDS: '20',
    QP_QUEUE_MAINTENANCE_SECONDS: '1',
    QP_CHUNK_RETRIES: '3',
  };
}

const startServer = async () => {
  server = await startServerProcess({ repoRoot, mode: 'tsx', port, env: { ...env(), LOG_LEVEL: 'warn' } });
};
const startWorker = async () => {
  const worker = await startWorkerProcess({ repoRoot, mode: 'tsx', env: env() });
  workers.push(worker);
  return worker;
};

async function api(method: 'GET' | 'POST', path: string, body?: unknown): Promise<{ status: number; body: any }> {
  const res = await fetch(`http://127.0.0.1:${port}/api${path}`, {
    method,
    headers: { Authorization: `Bearer ${token}`, ...(body ? { 'Content-Type': 'application/json' } : {}) },
    body: body ? JSON.stringify(body) : undefined,
  });
  return { status: res.status, body: await res.json() };
}

async function createCase(title: string, params: CaseParams): Promise<string> {
  const res = await api('POST', `/labs/${labId}/cases`, { title, tags: [], params });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  return res.body.id;
}

async function submit(caseId: string, settings: RunSettings): Promise<JobView> {
  const res = await api('POST', `/cases/${caseId}/revisions/1/jobs`, { settings });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  return res.body;
}

async function waitFor(caseId: string, jobId: string, done: (job: JobView) => boolean, timeoutMs = 240_000): Promise<JobView> {
  const until = Date.now() + timeoutMs;
  for (;;) {
    try {
      const res = await api('GET', `/cases/${caseId}/jobs/${jobId}`);
      if (res.status === 200 && done(res.body)) return res.body;
    } catch {
      // the server is restarting
    }
    if (Date.now() > until) throw new Error(`job ${jobId} did not get there in time`);
    await new Promise((r) => setTimeout(r, 300));
  }
}
const finished = (j: JobView) => ['succeeded', 'failed', 'cancelled'].includes(j.state);

async function storedDigest(caseId: string, runId: string): Promise<string> {
  const rev = await api('GET', `/cases/${caseId}/revisions/1`);
  const run = (rev.body.runs as Array<{ id: string; resultDigest: string; verification: { state: string } | null }>).find((r) => r.id === runId);
  expect(run?.verification?.state).toBe('verified');
  return run!.resultDigest;
}

function mapSettings(params: CaseParams): RunSettings {
  const d = defaultRunSettings('map', params);
  return { ...d, grid: { x: { ...d.grid.x, count: 20 }, y: { ...d.grid.y, count: 20 } } };
}

/** A case whose map rows take a second or two each, so a worker can be caught holding one. */
function slowCase(): CaseParams {
  const p = templateCase();
  p.run.duration = 40;
  p.run.outputPoints = 200;
  return p;
}

beforeAll(async () => {
  const cluster = await ensurePostgres({ fsync: false, databases: [], log: () => undefined });
  const lock = await holdRunLock(cluster.url, 'quiverpoint_queue', (line) => console.log(`[queue tests] ${line}`));
  release = async () => {
    await lock.release();
    if (cluster.startedNow) stopPostgres(() => undefined);
  };
  databaseUrl = await recreateDatabase(cluster.url, 'quiverpoint_queue');
  await prepareDatabase(databaseUrl, { seed: false });
  sequelize = createSequelize(databaseUrl, { poolMax: 2 });
  const user = await User.create({ email: 'queue@queue-test.quiverpoint.test', name: 'Queue tester', passwordHash: await hashPassword(PASSWORD) });
  const lab = await Lab.create({ name: 'Queue test lab' });
  await Membership.create({ labId: lab.id, userId: user.id, role: 'analyst' });
  labId = lab.id;
  token = issueToken(user, loadConfig({ ...env(), NODE_ENV: 'test' })).token;
  port = await freePort();
  await startServer();
  await startWorker();
  await startWorker();
}, 180_000);

afterAll(async () => {
  await Promise.allSettled([server?.stop(), ...workers.map((w) => w.stop())]);
  await sequelize?.close();
  await release();
}, 60_000);

describe('server jobs on real processes', () => {
  it('computes a 20 x 20 outcome map on two workers with the in-process digest', { timeout: 300_000 }, async () => {
    const params = templateCase();
    params.run.duration = 0.5;
    params.run.outputPoints = 200;
    const caseId = await createCase('Queue map', params);
    const settings = mapSettings(params);
    const job = await submit(caseId, settings);
    expect(job.chunksTotal).toBe(20);
    const done = await waitFor(caseId, job.id, finished);
    expect(done.state, done.error ?? '').toBe('succeeded');
    const expected = makeRunRecord(params, settings, computeRun(params, settings));
    expect(await storedDigest(caseId, done.runId!)).toBe(expected.resultDigest);
    // Both workers took part.
    for (const w of workers.slice(0, 2)) expect(w.output()).toContain(job.id);
  });

  it('loses no chunk when a worker is killed holding one, and counts none twice', { timeout: 400_000 }, async () => {
    const params = slowCase();
    const caseId = await createCase('Queue map, worker killed', params);
    const settings = mapSettings(params);
    const victim = workers[0]!;
    const victimName = `${hostname()}:${victim.child.pid}`;
    const job = await submit(caseId, settings);
    // Wait until the victim holds a chunk of this job, then kill it as a machine dies.
    const until = Date.now() + 120_000;
    for (;;) {
      const held = await sequelize.query(
        `SELECT idx FROM job_chunks WHERE job_id = $1 AND worker = $2 AND state = 'pending'`,
        { bind: [job.id, victimName], type: QueryTypes.SELECT },
      );
      if (held.length > 0) break;
      if (Date.now() > until) throw new Error('the worker never took a chunk');
      await new Promise((r) => setTimeout(r, 50));
    }
    await victim.kill();
    const expected = makeRunRecord(params, settings, computeRun(params, settings));
    const done = await waitFor(caseId, job.id, finished);
    expect(done.state, done.error ?? '').toBe('succeeded');
    expect(done.chunksDone).toBe(20);
    expect(await storedDigest(caseId, done.runId!)).toBe(expected.resultDigest);
    const retried = await sequelize.query<{ n: number }>(
      `SELECT count(*)::int AS n FROM pgboss.job WHERE name = 'qp-chunks' AND data->>'jobId' = $1 AND retry_count > 0`,
      { bind: [job.id], type: QueryTypes.SELECT },
    );
    expect(retried[0]!.n).toBeGreaterThanOrEqual(1);
    workers.shift();
    await startWorker();
  });

  it('survives a server restart mid-job', { timeout: 400_000 }, async () => {
    const params = slowCase();
    params.drive.amplitude *= 1.1;
    const caseId = await createCase('Queue map, server restarted', params);
    const settings = mapSettings(params);
    const job = await submit(caseId, settings);
    await waitFor(caseId, job.id, (j) => j.chunksDone >= 3);
    await server!.stop();
    await new Promise((r) => setTimeout(r, 3000));
    await startServer();
    const done = await waitFor(caseId, job.id, finished);
    expect(done.state, done.error ?? '').toBe('succeeded');
    const expected = makeRunRecord(params, settings, computeRun(params, settings));
    expect(await storedDigest(caseId, done.runId!)).toBe(expected.resultDigest);
  });

  it('lets the CLI sign in, submit a sweep, follow it and print the stored run', { timeout: 300_000 }, async () => {
    const params = templateCase();
    params.run.duration = 0.5;
    params.run.outputPoints = 200;
    const caseId = await createCase('Queue sweep from the CLI', params);
    const dir = mkdtempSync(join(tmpdir(), 'qp-cli-'));
    const file = join(dir, 'case.json');
    writeFileSync(file, JSON.stringify(params));
    const run = promisify(execFile);
    const cli = (args: string[], extra: Record<string, string> = {}) =>
      run(process.execPath, ['--import', 'tsx', join(repoRoot, 'server', 'cli', 'main.ts'), ...args], {
        cwd: repoRoot, env: { ...process.env, ...extra }, maxBuffer: 64 * 1024 * 1024,
      });
    const server = `http://127.0.0.1:${port}`;
    const signedIn = await cli(['token', '--server', server, '--email', 'queue@queue-test.quiverpoint.test'], { QP_PASSWORD: PASSWORD });
    const cliToken = signedIn.stdout.trim();
    expect(cliToken.split('.')).toHaveLength(3);
    const sweep = ['--field', 'drive.amplitude', '--from', '0.005', '--to', '0.02', '--steps', '8'];
    const out = await cli(['sweep', file, ...sweep, '--server', server, '--case', caseId], { QP_TOKEN: cliToken });
    const printed = JSON.parse(out.stdout) as { record: { resultDigest: string; settings: RunSettings } };
    const local = await cli(['sweep', file, ...sweep, '--workers', '1']);
    expect(printed.record.resultDigest).toBe((JSON.parse(local.stdout) as { record: { resultDigest: string } }).record.resultDigest);
    expect(out.stderr).toMatch(/server job [0-9a-f-]{36} queued/);
    // A file that is not the saved revision is refused before anything is queued.
    writeFileSync(file, JSON.stringify({ ...params, run: { ...params.run, duration: 0.6 } }));
    const refused = await cli(['sweep', file, ...sweep, '--server', server, '--case', caseId], { QP_TOKEN: cliToken }).catch((e: { code: number; stderr: string }) => e);
    expect((refused as { code: number }).code).toBe(2);
    expect((refused as { stderr: string }).stderr).toContain('differs from r1');
  });
});
