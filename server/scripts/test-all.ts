/**
 * `npm test`: every check, in order, stopping at the first failure, with a summary at the end.
 * PostgreSQL (started here with fsync off if it was not running, and stopped again at the end), Debian chromium
 * for the browser tests and poppler-utils (pdftotext) for the case report tests, then (test databases are made fresh by the tests' own set-up): Node tests (Vitest projects shared, reference, server, api, queue), Angular unit tests,
 * worker type check, client build, server build, browser tests.
 */
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { checkoutPaths } from '../paths';
import { ensurePostgres, stopPostgres, type PgCluster } from './pg';
import { runCommand, summary, timed, type StepResult } from './steps';

/** Installs a Debian package when the program it brings is missing (apt-get update only when the install fails). */
function ensureDebianPackage(pkg: string, program: string): () => boolean {
  return () => {
    if (existsSync(program)) return true;
    console.log(`${program} missing: apt-get install -y ${pkg}`);
    const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' };
    if (runCommand('apt-get', ['install', '-y', pkg], '/', env)) return true;
    return runCommand('apt-get', ['update'], '/', env) && runCommand('apt-get', ['install', '-y', pkg], '/', env);
  };
}

async function main(): Promise<number> {
  const { repoRoot } = checkoutPaths();
  const results: StepResult[] = [];
  const skipped: string[] = [];
  let cluster: PgCluster | undefined;
  const finish = (code: number) => {
    if (cluster?.startedNow) stopPostgres();
    console.log(`\n=== summary\n${summary(results, skipped)}\n\n${code === 0 ? 'ALL CHECKS PASSED' : 'FAILED'}`);
    return code;
  };
  process.on('SIGINT', () => process.exit(finish(130)));

  const npx = (...args: string[]) => () => runCommand('npx', args, repoRoot);
  const steps: Array<[string, () => boolean | Promise<boolean>]> = [
    [
      // quiverpoint_test is recreated and migrated by the API tests' global setup (under a lock, so two runs on one
      // checkout cannot drop each other's database); quiverpoint_e2e by tests/e2e/support/server.ts.
      'PostgreSQL ready',
      async () => {
        cluster = await ensurePostgres({ fsync: false, databases: ['quiverpoint_test', 'quiverpoint_e2e'] });
        return true;
      },
    ],
    ['chromium present', ensureDebianPackage('chromium', '/usr/bin/chromium')],
    // The case report tests read the PDF's text with pdftotext.
    ['poppler-utils present', ensureDebianPackage('poppler-utils', '/usr/bin/pdftotext')],
    ['vitest: shared, reference, server, api, queue', npx('vitest', 'run')],
    ['ng test (Angular unit tests)', npx('ng', 'test', '--watch=false')],
  ];
  if (existsSync(join(repoRoot, 'tsconfig.worker.json'))) steps.push(['tsc workers (tsconfig.worker.json)', npx('tsc', '-p', 'tsconfig.worker.json', '--noEmit')]);
  else skipped.push('worker type check (no tsconfig.worker.json)');
  steps.push(['ng build (client)', npx('ng', 'build')], ['tsc server build (dist/server)', npx('tsc', '-p', 'server/tsconfig.json')]);
  if (existsSync(join(repoRoot, 'vitest.e2e.config.mts'))) {
    steps.push([
      'browser tests (vitest.e2e.config.mts)',
      () => runCommand('npx', ['vitest', 'run', '-c', 'vitest.e2e.config.mts'], repoRoot, { ...process.env, QP_E2E_SERVER: 'compiled' }),
    ]);
  } else skipped.push('browser tests (no vitest.e2e.config.mts)');

  for (const [name, work] of steps) {
    if (!(await timed(name, work, results))) return finish(1);
  }
  return finish(0);
}

main().then(
  (code) => process.exit(code),
  (err: unknown) => {
    console.error(err);
    process.exit(1);
  },
);
