/**
 * `npm run bench:api`: the case list under load. Creates the scratch database `quiverpoint_bench` on the private
 * cluster (or DATABASE_URL's server), migrates it, bulk-inserts 10,000 cases into one lab, starts the app in this
 * process on a free loopback port and drives it with autocannon (in a child process) at 50 connections against the first page, a tag-filtered page and a title search.
 * Prints requests/s, latency p50/p95/p99, SQL queries and the app's CPU time per request (the last is the figure
 * that stays comparable on a busy machine); drops the scratch database at the end.
 */
import { execFile } from 'node:child_process';
import { randomUUID } from 'node:crypto';
import type { AddressInfo } from 'node:net';
import { createRequire } from 'node:module';
import { Sequelize } from 'sequelize';
import { createApp } from '../../server/app';
import { loadConfig } from '../../server/config';
import { Lab, Membership, User } from '../../server/db/models';
import { createSequelize } from '../../server/db/sequelize';
import { createLogger } from '../../server/logger';
import { prepareDatabase, recreateDatabase } from '../../server/scripts/db-tasks';
import { ensurePostgres, stopPostgres } from '../../server/scripts/pg';
import { issueToken } from '../../server/services/auth-service';

const DATABASE = 'quiverpoint_bench';
const CASES = 10_000;
const CONNECTIONS = Number(process.env['QP_BENCH_CONNECTIONS'] ?? 50);
const SECONDS = Number(process.env['QP_BENCH_SECONDS'] ?? 6);

const SHAPES = ['Tall rod', 'Crank', 'Shaker', 'Probe', 'Mast', 'Hinged fixture', 'Teaching pendulum'];
const MATERIALS = ['brass', 'steel', 'aluminium', 'oak', 'carbon', 'acrylic', 'titanium', 'copper', 'glass', 'nylon', 'birch', 'zinc', 'bronze'];
const TAGS = ['bench', 'crank', 'shaker', 'probe', 'teaching', 'tilted', 'upright', 'motor', 'mast', 'fixture', 'draft', 'lab-a'];

interface Load {
  requests: number;
  failed: number;
  latencies: number[];
  seconds: number;
}

/**
 * autocannon in a child process, so the load generator neither shares the app's event loop nor shows up in the
 * app's CPU time; every response time is kept, so any percentile can be read exactly.
 */
function loadTest(url: string, token: string, seconds: number): Promise<Load> {
  const autocannon = createRequire(__filename).resolve('autocannon');
  const code = `
    const autocannon = require(${JSON.stringify(autocannon)});
    const latencies = [];
    let failed = 0;
    const started = process.hrtime.bigint();
    autocannon(JSON.parse(process.argv[1]), (err) => {
      if (err) throw err;
      const seconds = Number(process.hrtime.bigint() - started) / 1e9;
      process.stdout.write(JSON.stringify({ requests: latencies.length, failed, latencies, seconds }));
    }).on('response', (_client, status, _bytes, ms) => {
      latencies.push(ms);
      if (status < 200 || status > 299) failed++;
    });`;
  const options = { url, connections: CONNECTIONS, duration: seconds, headers: { authorization: `Bearer ${token}` } };
  return new Promise((resolve, reject) => {
    execFile(process.execPath, ['-e', code, JSON.stringify(options)], { maxBuffer: 256 * 1024 * 1024 }, (err, stdout) => {
      if (err) reject(err);
      else resolve(JSON.parse(stdout) as Load);
    });
  });
}

function percentile(sorted: number[], p: number): number {
  return sorted[Math.min(sorted.length - 1, Math.ceil((p / 100) * sorted.length) - 1)] ?? NaN;
}

async function seedCases(sequelize: Sequelize, labId: string, authorIds: string[]): Promise<void> {
  await sequelize.query(
    `INSERT INTO cases (id, lab_id, title, tags, author_id, latest_revision, recheck_state, archived, created_at, updated_at)
     SELECT gen_random_uuid(), :labId,
            (:shapes::text[])[1 + i % ${SHAPES.length}] || ' ' || (:materials::text[])[1 + i % ${MATERIALS.length}] || ' rig #' || i,
            ARRAY[(:tags::text[])[1 + i % ${TAGS.length}], (:tags::text[])[1 + (i / ${TAGS.length}) % ${TAGS.length}]],
            (:authors::uuid[])[1 + i % ${authorIds.length}],
            1 + i % 7,
            (ARRAY['draft', 'awaiting-recheck', 'confirmed', 'disputed'])[1 + i % 4],
            i % 20 = 0,
            now() - i * interval '7 minutes', now() - i * interval '3 minutes'
       FROM generate_series(1, ${CASES}) AS i`,
    { replacements: { labId, shapes: `{${SHAPES.map((s) => `"${s}"`).join(',')}}`, materials: `{${MATERIALS.join(',')}}`, tags: `{${TAGS.join(',')}}`, authors: `{${authorIds.join(',')}}` } },
  );
  // What autovacuum does on a live database: statistics, and a visibility map for index-only counts.
  await sequelize.query('VACUUM ANALYZE cases');
}

export async function run(): Promise<void> {
  const cluster = await ensurePostgres({ fsync: false, log: () => undefined });
  const url = await recreateDatabase(cluster.url, DATABASE);
  let sequelize: Sequelize | undefined;
  let server: import('node:http').Server | undefined;
  try {
    await prepareDatabase(url, { seed: false });
    const config = loadConfig({ ...process.env, NODE_ENV: 'production', DATABASE_URL: url, LOG_LEVEL: 'silent', QP_SIGNIN_LIMIT: '100000' });
    sequelize = createSequelize(url);
    let queries = 0;
    sequelize.options.logging = () => void queries++;

    const lab = await Lab.create({ name: 'Bench lab' });
    const authors: User[] = [];
    for (let i = 0; i < 5; i++) {
      authors.push(await User.create({ email: `bench-${i}-${randomUUID().slice(0, 6)}@quiverpoint.test`, name: `Bench author ${i}`, passwordHash: 'not-a-password-hash' }));
    }
    for (const u of authors) await Membership.create({ labId: lab.id, userId: u.id, role: 'analyst' });
    const started = Date.now();
    await seedCases(sequelize, lab.id, authors.map((a) => a.id));
    console.log(`seeded ${CASES} cases in ${((Date.now() - started) / 1000).toFixed(1)} s`);

    const app = createApp({ config, sequelize, logger: createLogger('silent'), serveClient: false });
    const listening = app.listen(0, '127.0.0.1');
    server = listening;
    await new Promise<void>((resolve) => listening.once('listening', () => resolve()));
    const base = `http://127.0.0.1:${(listening.address() as AddressInfo).port}`;
    const token = issueToken(authors[0] as User, config).token;

    const scenarios: Array<[name: string, path: string]> = [
      ['first page', `/api/labs/${lab.id}/cases`],
      ['tag filter', `/api/labs/${lab.id}/cases?tag=teaching&page=3`],
      ['state filter', `/api/labs/${lab.id}/cases?recheck=confirmed`],
      ['title search', `/api/labs/${lab.id}/cases?search=brass`],
      ['health (baseline)', '/api/health'],
    ];
    await loadTest(`${base}${scenarios[0]?.[1]}`, token, 2); // warm-up: JIT, connection pool, buffer cache
    console.log(`${CONNECTIONS} connections, ${SECONDS} s each`);
    console.log('scenario            req/s    p50 ms   p95 ms   p99 ms   queries/req   app CPU ms/req   non-2xx');
    for (const [name, path] of scenarios) {
      queries = 0;
      const cpuBefore = process.cpuUsage();
      const load = await loadTest(`${base}${path}`, token, SECONDS);
      const cpu = process.cpuUsage(cpuBefore);
      const sorted = load.latencies.sort((a, b) => a - b);
      const perRequest = load.requests > 0 ? queries / load.requests : NaN;
      console.log(
        `${name.padEnd(18)} ${(load.requests / load.seconds).toFixed(0).padStart(6)} ${percentile(sorted, 50).toFixed(1).padStart(9)}` +
          `${percentile(sorted, 95).toFixed(1).padStart(9)}${percentile(sorted, 99).toFixed(1).padStart(9)}` +
          `${perRequest.toFixed(2).padStart(14)}${((cpu.user + cpu.system) / 1000 / Math.max(1, load.requests)).toFixed(2).padStart(17)}` +
          `${String(load.failed).padStart(10)}`,
      );
    }
  } finally {
    await new Promise((resolve) => (server ? server.close(resolve) : resolve(undefined)));
    await sequelize?.close();
    const admin = new Sequelize(cluster.url, { logging: false });
    await admin.query(`DROP DATABASE IF EXISTS ${DATABASE} WITH (FORCE)`);
    await admin.close();
    if (cluster.startedNow) stopPostgres(() => undefined);
  }
}

if (require.main === module) {
  run().catch((err: unknown) => {
    console.error(err);
    process.exitCode = 1;
  });
}
