/**
 * Shared set-up for API tests: the real app on the real `quiverpoint_test` database (prepared by global-setup),
 * plus helpers that create users and labs directly through the models.
 */
import { randomUUID } from 'node:crypto';
import type { Express } from 'express';
import type { Sequelize } from 'sequelize';
import request from 'supertest';
import { inject } from 'vitest';
import { createApp } from '../../server/app';
import { loadConfig, type Config } from '../../server/config';
import { Lab, Membership, User, type LabRole } from '../../server/db/models';
import { createSequelize } from '../../server/db/sequelize';
import { hashPassword } from '../../server/services/passwords';
import { RunVerifier } from '../../server/services/run-verifier';

export const PASSWORD = 'correct-horse-battery';
let passwordHash: Promise<string> | undefined;

export interface TestApi {
  app: Express;
  config: Config;
  sequelize: Sequelize;
  /** reruns the runs stored through `app` (one engine thread) */
  verifier: RunVerifier;
  /** another app (other settings) on the same connection pool; models are bound to one Sequelize per process */
  appWith(env: Record<string, string>): Express;
  close(): Promise<void>;
}

export function testConfig(overrides: Record<string, string> = {}): Config {
  return loadConfig({
    NODE_ENV: 'test',
    DATABASE_URL: inject('databaseUrl'),
    QP_JWT_SECRET: 'test-secret-that-is-long-enough-for-hs256-signing',
    QP_SIGNIN_LIMIT: '1000',
    QP_SMTP_PORT: '1',
    ...overrides,
  });
}

export function startApi(options: { env?: Record<string, string> } = {}): TestApi {
  const config = testConfig(options.env);
  const sequelize = createSequelize(config.databaseUrl, { poolMax: 4 });
  const verifier = new RunVerifier({ threads: 1 });
  const app = createApp({ config, sequelize, serveClient: false, checkResponses: true, verifier });
  const appWith = (env: Record<string, string>) => createApp({ config: testConfig({ ...options.env, ...env }), sequelize, serveClient: false, checkResponses: true, verifier });
  return { app, config, sequelize, verifier, appWith, close: async () => {
    await verifier.stop();
    await sequelize.close();
  } };
}

/** A unique address per call, so test files never collide in the shared database. */
export function uniqueEmail(label: string): string {
  return `${label}-${randomUUID().slice(0, 8)}@api-test.quiverpoint.test`;
}

export async function createUser(label: string, extra: { isSiteAdmin?: boolean } = {}): Promise<User> {
  passwordHash ??= hashPassword(PASSWORD);
  return User.create({ email: uniqueEmail(label), name: `Test ${label}`, passwordHash: await passwordHash, ...extra });
}

export async function createLab(members: Array<[User, LabRole]>): Promise<Lab> {
  const lab = await Lab.create({ name: `Test lab ${randomUUID()}` });
  for (const [user, role] of members) await Membership.create({ labId: lab.id, userId: user.id, role });
  return lab;
}

export async function tokenFor(app: Express, user: User): Promise<string> {
  const res = await request(app).post('/api/auth/sign-in').send({ email: user.email, password: PASSWORD });
  if (res.status !== 200 || typeof res.body.token !== 'string') throw new Error(`sign-in failed: ${res.status} ${JSON.stringify(res.body)}`);
  return res.body.token;
}

/** Asserts nothing; returns the `{ code, message, field }` of an error reply for expect(). */
export function errorOf(res: request.Response): { code?: unknown; message?: unknown; field?: unknown } {
  const body: unknown = res.body;
  if (typeof body === 'object' && body !== null && 'error' in body) {
    const error = (body as { error: unknown }).error;
    if (typeof error === 'object' && error !== null) return error as { code?: unknown; message?: unknown; field?: unknown };
  }
  return {};
}
