/**
 * The private PostgreSQL cluster of one checkout: install, initdb, start, create role and databases, stop.
 *
 * Everything is idempotent. The cluster runs as the `postgres` system user (initdb refuses root), keeps its data
 * outside the repo (CI clones into folders that user may not enter) and listens on 127.0.0.1 only. When
 * DATABASE_URL is set explicitly, an external server is used and nothing here touches a cluster.
 */
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readdirSync, chmodSync, chownSync, readFileSync } from 'node:fs';
import { connect } from 'node:net';
import { dirname, join } from 'node:path';
import { checkoutPaths, privateDatabaseUrl, APP_ROLE, APP_ROLE_PASSWORD, DEFAULT_BASE } from '../paths';

export interface PgCluster {
  /** true when DATABASE_URL points at a server we do not manage */
  external: boolean;
  /** URL of the app database `quiverpoint` */
  url: string;
  port: number;
  dataDir: string;
  runDir: string;
  logFile: string;
  /** true when this call started the cluster (so the caller may stop it when done) */
  startedNow: boolean;
}

export interface EnsureOptions {
  /** turn fsync off for this start (test runs only; data may not survive a crash) */
  fsync?: boolean;
  /** databases to create when missing (owned by the app role) */
  databases?: string[];
  log?: (line: string) => void;
}

const PG_USER = 'postgres';

function run(cmd: string, args: string[], opts: { asPostgres?: boolean; allowFail?: boolean } = {}): { ok: boolean; out: string } {
  const [file, argv] = opts.asPostgres ? ['setpriv', ['--reuid=' + PG_USER, '--regid=' + PG_USER, '--init-groups', '--', cmd, ...args]] : [cmd, args];
  const res = spawnSync(file, argv, { cwd: '/', encoding: 'utf8', env: { ...process.env, LC_ALL: 'C.UTF-8' } });
  const out = `${res.stdout ?? ''}${res.stderr ?? ''}`;
  const ok = res.status === 0;
  if (!ok && !opts.allowFail) {
    throw new Error(`${cmd} ${args.join(' ')} failed (exit ${res.status ?? res.signal ?? res.error?.message}):\n${out}`);
  }
  return { ok, out };
}

/** The newest installed PostgreSQL binary folder (prefers 15), or undefined. */
export function findPgBin(): string | undefined {
  const root = '/usr/lib/postgresql';
  if (!existsSync(root)) return undefined;
  const versions = readdirSync(root)
    .filter((v) => existsSync(join(root, v, 'bin', 'initdb')) && existsSync(join(root, v, 'bin', 'pg_ctl')))
    .sort((a, b) => Number(b) - Number(a));
  const preferred = versions.includes('15') ? '15' : versions[0];
  return preferred ? join(root, preferred, 'bin') : undefined;
}

function installPostgres(log: (line: string) => void): string {
  log('PostgreSQL binaries not found; installing the Debian postgresql package with apt-get');
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
  const install = () => spawnSync('apt-get', ['install', '-y', '--no-install-recommends', 'postgresql'], { stdio: 'inherit', env });
  if (install().status !== 0) {
    spawnSync('apt-get', ['update'], { stdio: 'inherit', env });
    if (install().status !== 0) throw new Error('apt-get install postgresql failed; install PostgreSQL or set DATABASE_URL');
  }
  const bin = findPgBin();
  if (!bin) throw new Error('postgresql installed but no initdb found under /usr/lib/postgresql');
  return bin;
}

function ensurePostgresUser(): void {
  if (!run('id', ['-u', PG_USER], { allowFail: true }).ok) {
    throw new Error(`system user "${PG_USER}" is missing (it comes with the Debian postgresql package)`);
  }
}

/** Creates `dir` and parents; every parent must be enterable by the postgres user. */
function prepareFolder(dir: string): void {
  mkdirSync(dir, { recursive: true });
  const pgUid = Number(run('id', ['-u', PG_USER]).out.trim());
  const pgGid = Number(run('id', ['-g', PG_USER]).out.trim());
  chownSync(dir, pgUid, pgGid);
  chmodSync(dir, 0o700);
  if (!run('test', ['-w', dir, '-a', '-x', dir], { asPostgres: true, allowFail: true }).ok) {
    const blocked: string[] = [];
    for (let p = dirname(dir); p !== dirname(p); p = dirname(p)) {
      if (!run('test', ['-x', p], { asPostgres: true, allowFail: true }).ok) blocked.push(p);
    }
    throw new Error(
      `the postgres user cannot enter ${dir}` +
        (blocked.length ? ` (blocked at ${blocked.join(', ')})` : '') +
        '; set QP_PG_DATA to a folder outside /root, e.g. under /var/tmp',
    );
  }
}

function clusterRunning(bin: string, dataDir: string): boolean {
  return run(join(bin, 'pg_ctl'), ['status', '-D', dataDir], { asPostgres: true, allowFail: true }).ok;
}

/** The port a running cluster listens on, from line 4 of postmaster.pid. */
function runningPort(dataDir: string): number | undefined {
  const pidFile = join(dataDir, 'postmaster.pid');
  if (!existsSync(pidFile)) return undefined;
  const port = Number(readFileSync(pidFile, 'utf8').split('\n')[3]);
  return Number.isInteger(port) && port > 0 ? port : undefined;
}

function portInUse(port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const socket = connect({ host: '127.0.0.1', port });
    socket.setTimeout(1_000);
    socket.once('connect', () => {
      socket.destroy();
      resolve(true);
    });
    socket.once('timeout', () => {
      socket.destroy();
      resolve(true);
    });
    socket.once('error', () => resolve(false));
  });
}

/** The configured port, or when something else holds it, the next free one of the following 20. */
async function choosePort(wanted: number, log: (line: string) => void): Promise<number> {
  for (let port = wanted; port < wanted + 20 && port <= 65535; port++) {
    if (!(await portInUse(port))) {
      if (port !== wanted) log(`port ${wanted} is taken by another program; using ${port} for this cluster`);
      return port;
    }
  }
  throw new Error(`ports ${wanted}-${wanted + 19} are all in use; set QP_PG_PORT to a free port`);
}

function psql(bin: string, runDir: string, port: number, sql: string, db = 'postgres'): string {
  return run(join(bin, 'psql'), ['-h', runDir, '-p', String(port), '-U', PG_USER, '-d', db, '-v', 'ON_ERROR_STOP=1', '-Atqc', sql], {
    asPostgres: true,
  }).out.trim();
}

function tailLog(logFile: string): string {
  if (!existsSync(logFile)) return '(no log)';
  return readFileSync(logFile, 'utf8').split('\n').slice(-15).join('\n');
}

/**
 * Installs, initialises and starts the private cluster when needed, and creates the role and databases.
 * The port actually used (the running cluster's, or a free one when QP_PG_PORT's is taken by another program) is
 * written back to process.env.QP_PG_PORT so the config and child processes agree.
 */
export async function ensurePostgres(options: EnsureOptions = {}): Promise<PgCluster> {
  const log = options.log ?? ((line: string) => console.log(`[pg] ${line}`));
  const paths = checkoutPaths();
  if (process.env['DATABASE_URL']) {
    log('DATABASE_URL is set: using that server, no private cluster');
    return { external: true, url: process.env['DATABASE_URL'], port: 0, dataDir: '', runDir: '', logFile: '', startedNow: false };
  }
  const { pgData: dataDir, pgRunDir: runDir } = paths;
  let port = paths.pgPort;
  const logFile = join(runDir, 'postgresql.log');
  const bin = findPgBin() ?? installPostgres(log);
  ensurePostgresUser();
  mkdirSync(dirname(dataDir), { recursive: true });
  if (dirname(dataDir) === DEFAULT_BASE) chmodSync(DEFAULT_BASE, 0o755);
  prepareFolder(dataDir);
  prepareFolder(runDir);

  if (!existsSync(join(dataDir, 'PG_VERSION'))) {
    log(`initdb ${dataDir}`);
    run(join(bin, 'initdb'), ['-D', dataDir, '-U', PG_USER, '--encoding=UTF8', '--locale=C.UTF-8', '--auth-local=trust', '--auth-host=scram-sha-256'], {
      asPostgres: true,
    });
  }

  let startedNow = false;
  if (clusterRunning(bin, dataDir)) {
    port = runningPort(dataDir) ?? port;
    log(`cluster already running on port ${port} (${dataDir})`);
  } else {
    port = await choosePort(port, log);
    const settings = [`-p ${port}`, `-k ${runDir}`, `-c listen_addresses=127.0.0.1`, `-c fsync=${options.fsync === false ? 'off' : 'on'}`];
    if (options.fsync === false) settings.push('-c synchronous_commit=off', '-c full_page_writes=off');
    log(`starting on 127.0.0.1:${port} (fsync ${options.fsync === false ? 'off' : 'on'}), log ${logFile}`);
    const res = run(join(bin, 'pg_ctl'), ['start', '-D', dataDir, '-l', logFile, '-w', '-t', '60', '-o', settings.join(' ')], {
      asPostgres: true,
      allowFail: true,
    });
    if (res.ok) startedNow = true;
    else if (clusterRunning(bin, dataDir)) {
      // Another process of this checkout started it at the same moment; use that one.
      port = runningPort(dataDir) ?? port;
      log(`cluster was started concurrently; using port ${port}`);
    } else throw new Error(`PostgreSQL did not start (port ${port} in use? set QP_PG_PORT):\n${res.out}\n${tailLog(logFile)}`);
  }

  process.env['QP_PG_PORT'] = String(port);
  const hasRole = psql(bin, runDir, port, `SELECT 1 FROM pg_roles WHERE rolname = '${APP_ROLE}'`) === '1';
  if (!hasRole) {
    log(`creating role ${APP_ROLE}`);
    psql(bin, runDir, port, `CREATE ROLE ${APP_ROLE} LOGIN CREATEDB PASSWORD '${APP_ROLE_PASSWORD}'`);
  }
  for (const db of options.databases ?? ['quiverpoint']) {
    if (!/^[a-z_][a-z0-9_]*$/.test(db)) throw new Error(`bad database name ${db}`);
    if (psql(bin, runDir, port, `SELECT 1 FROM pg_database WHERE datname = '${db}'`) !== '1') {
      log(`creating database ${db}`);
      psql(bin, runDir, port, `CREATE DATABASE ${db} OWNER ${APP_ROLE}`);
    }
  }
  return { external: false, url: privateDatabaseUrl(port, 'quiverpoint'), port, dataDir, runDir, logFile, startedNow };
}

/** Stops the private cluster (fast shutdown). No-op when it is not running or DATABASE_URL is set. */
export function stopPostgres(log: (line: string) => void = (l) => console.log(`[pg] ${l}`)): void {
  if (process.env['DATABASE_URL']) return;
  const bin = findPgBin();
  const { pgData } = checkoutPaths();
  if (!bin || !existsSync(join(pgData, 'PG_VERSION')) || !clusterRunning(bin, pgData)) {
    log('cluster not running');
    return;
  }
  run(join(bin, 'pg_ctl'), ['stop', '-D', pgData, '-m', 'fast', '-w'], { asPostgres: true });
  log('cluster stopped');
}

/** One line describing the cluster; used by the CLI `status`. */
export function statusPostgres(): string {
  if (process.env['DATABASE_URL']) return 'external server (DATABASE_URL)';
  const bin = findPgBin();
  const { pgData, pgPort } = checkoutPaths();
  if (!bin) return 'PostgreSQL not installed';
  if (!existsSync(join(pgData, 'PG_VERSION'))) return `no cluster yet at ${pgData}`;
  return clusterRunning(bin, pgData) ? `running at 127.0.0.1:${runningPort(pgData) ?? pgPort}, data ${pgData}` : `stopped, data ${pgData}`;
}
