/**
 * The server's configuration: one typed, validated object built from the environment, read once at boot.
 * Every setting has a name, an environment variable, a default that works on a developer machine, and a doc line
 * (listed in docs/api.md and docs/database.md).
 */
import { randomBytes } from 'node:crypto';
import { chmodSync, existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { availableParallelism } from 'node:os';
import { z } from 'zod';
import { checkoutPaths, privateDatabaseUrl } from './paths';

const port = z.coerce.number().int().min(0).max(65535);
const positiveInt = z.coerce.number().int().positive();

const schema = z.object({
  /** NODE_ENV: `production` serves the built client; `test` silences logs by default */
  env: z.enum(['development', 'test', 'production']),
  /** PORT: HTTP port of the app server */
  port,
  /** HOST: address the app server binds to */
  host: z.string().min(1),
  /** DATABASE_URL: the app database; default is the private cluster's `quiverpoint` database */
  databaseUrl: z.url({ protocol: /^postgres(ql)?$/ }),
  /** QP_JWT_SECRET: signing key for access tokens; default generated once per checkout in the state folder */
  jwtSecret: z.string().min(32),
  /** QP_JWT_TTL_SECONDS: lifetime of an access token */
  jwtTtlSeconds: positiveInt,
  /** QP_SIGNIN_LIMIT: sign-in attempts allowed per client address per window */
  signInLimit: positiveInt,
  /** QP_SIGNIN_WINDOW_MS: length of the sign-in rate-limit window */
  signInWindowMs: positiveInt,
  /** QP_SIGNIN_ACCOUNT_FREE_FAILURES: wrong passwords for one account before its back-off starts */
  signInAccountFreeFailures: positiveInt,
  /** QP_SIGNIN_ACCOUNT_BASE_DELAY_MS: first back-off delay; each further failure doubles it */
  signInAccountBaseDelayMs: positiveInt,
  /** QP_SIGNIN_ACCOUNT_MAX_DELAY_MS: the longest back-off delay */
  signInAccountMaxDelayMs: positiveInt,
  /** QP_SMTP_HOST: SMTP server for outgoing mail (the local mail sink by default) */
  smtpHost: z.string().min(1),
  /** QP_SMTP_PORT: SMTP port (local mail sink default 54325) */
  smtpPort: port,
  /** QP_MAIL_SINK: `true` runs the local mail sink inside the server on QP_SMTP_PORT (local use and tests) */
  mailSink: z.boolean(),
  /** QP_MAIL_FROM: sender address of outgoing mail */
  mailFrom: z.string().min(3),
  /** QP_PUBLIC_URL: base URL used in links sent by mail */
  publicUrl: z.url(),
  /** QP_INVITATION_TTL_HOURS: how long an invitation can be accepted */
  invitationTtlHours: positiveInt,
  /** LOG_LEVEL: pino level (fatal, error, warn, info, debug, trace, silent) */
  logLevel: z.enum(['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent']),
  /** QP_CLIENT_DIR: the built Angular app served in production */
  clientDir: z.string().min(1),
  /** QP_VERIFY_THREADS: engine worker threads that rerun stored runs to verify them (off the request path) */
  verifyThreads: positiveInt,
  /** QP_WORKER_THREADS: engine threads of one job worker process (`npm run worker`); default one per core */
  workerThreads: positiveInt,
  /** QP_CHUNK_TIMEOUT_SECONDS: a job chunk running longer is taken as lost (its worker killed) and given to another */
  chunkTimeoutSeconds: positiveInt,
  /** QP_CHUNK_RETRIES: retries of a lost or failed chunk before its job fails */
  chunkRetries: z.coerce.number().int().min(0).max(20),
  /** QP_QUEUE_MAINTENANCE_SECONDS: how often the queue looks for lost chunks */
  queueMaintenanceSeconds: positiveInt,
  /** QP_JOB_MAIL_AFTER_SECONDS: a server job ending this long after its submission mails its submitter */
  jobMailAfterSeconds: z.coerce.number().int().min(0),
});

export type Config = z.infer<typeof schema>;

/** Reads (or creates once) the per-checkout JWT secret, so tokens survive server restarts. */
function checkoutJwtSecret(stateDir: string): string {
  const file = join(stateDir, 'jwt-secret');
  if (existsSync(file)) return readFileSync(file, 'utf8').trim();
  mkdirSync(stateDir, { recursive: true, mode: 0o700 });
  const secret = randomBytes(48).toString('base64url');
  try {
    writeFileSync(file, `${secret}\n`, { mode: 0o600, flag: 'wx' });
  } catch (err) {
    // Another process created it first: use theirs, so both sign and check with the same key.
    if ((err as NodeJS.ErrnoException).code === 'EEXIST') return readFileSync(file, 'utf8').trim();
    throw err;
  }
  chmodSync(file, 0o600);
  return secret;
}

/** Builds and validates the configuration; throws one readable error listing every bad variable. */
export function loadConfig(env: NodeJS.ProcessEnv = process.env): Config {
  const paths = checkoutPaths(env);
  const nodeEnv = env['NODE_ENV'] || 'development';
  const raw = {
    env: nodeEnv,
    port: env['PORT'] || 4310,
    host: env['HOST'] || '127.0.0.1',
    databaseUrl: env['DATABASE_URL'] || privateDatabaseUrl(paths.pgPort, 'quiverpoint'),
    jwtSecret: env['QP_JWT_SECRET'] || checkoutJwtSecret(paths.stateDir),
    jwtTtlSeconds: env['QP_JWT_TTL_SECONDS'] || 1800,
    signInLimit: env['QP_SIGNIN_LIMIT'] || 10,
    signInWindowMs: env['QP_SIGNIN_WINDOW_MS'] || 60_000,
    signInAccountFreeFailures: env['QP_SIGNIN_ACCOUNT_FREE_FAILURES'] || 5,
    signInAccountBaseDelayMs: env['QP_SIGNIN_ACCOUNT_BASE_DELAY_MS'] || 2_000,
    signInAccountMaxDelayMs: env['QP_SIGNIN_ACCOUNT_MAX_DELAY_MS'] || 300_000,
    smtpHost: env['QP_SMTP_HOST'] || '127.0.0.1',
    smtpPort: env['QP_SMTP_PORT'] || 54325,
    mailSink: ['1', 'true', 'yes'].includes((env['QP_MAIL_SINK'] ?? '').toLowerCase()),
    mailFrom: env['QP_MAIL_FROM'] || 'Quiverpoint <no-reply@quiverpoint.localhost>',
    publicUrl: env['QP_PUBLIC_URL'] || `http://localhost:${env['PORT'] || 4310}`,
    invitationTtlHours: env['QP_INVITATION_TTL_HOURS'] || 168,
    logLevel: env['LOG_LEVEL'] || (nodeEnv === 'test' ? 'silent' : 'info'),
    clientDir: env['QP_CLIENT_DIR'] || join(paths.repoRoot, 'dist', 'quiverpoint', 'browser'),
    verifyThreads: env['QP_VERIFY_THREADS'] || 1,
    workerThreads: env['QP_WORKER_THREADS'] || availableParallelism(),
    chunkTimeoutSeconds: env['QP_CHUNK_TIMEOUT_SECONDS'] || 3600,
    chunkRetries: env['QP_CHUNK_RETRIES'] || 3,
    queueMaintenanceSeconds: env['QP_QUEUE_MAINTENANCE_SECONDS'] || 30,
    jobMailAfterSeconds: env['QP_JOB_MAIL_AFTER_SECONDS'] ?? 300,
  };
  const parsed = schema.safeParse(raw);
  if (!parsed.success) {
    const lines = parsed.error.issues.map((i) => `  ${i.path.join('.')}: ${i.message}`);
    throw new Error(`invalid configuration:\n${lines.join('\n')}`);
  }
  return parsed.data;
}

let cached: Config | undefined;

/** The configuration of this process, read once. */
export function config(): Config {
  cached ??= loadConfig();
  return cached;
}
