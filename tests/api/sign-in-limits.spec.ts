import { createHash, randomBytes, randomUUID } from 'node:crypto';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Invitation, type User } from '../../server/db/models';
import { PASSWORD, createLab, createUser, errorOf, startApi, tokenFor, uniqueEmail, type TestApi } from './support';

let api: TestApi;
let ada: User;
let bob: User;

beforeAll(async () => {
  api = startApi();
  ada = await createUser('backoff-ada');
  bob = await createUser('backoff-bob');
});
afterAll(() => api.close());

const signIn = (app: Parameters<typeof request>[0], email: string, password: string) => request(app).post('/api/auth/sign-in').send({ email, password });

describe('replies that carry a token are never cached', () => {
  it('sign-in answers with Cache-Control: no-store', async () => {
    const res = await signIn(api.app, ada.email, PASSWORD);
    expect(res.status).toBe(200);
    expect(res.headers['cache-control']).toBe('no-store');
  });

  it('accepting an invitation answers with Cache-Control: no-store', async () => {
    const lab = await createLab([[ada, 'owner']]);
    const token = randomBytes(24).toString('base64url');
    await Invitation.create({
      labId: lab.id,
      email: uniqueEmail('invitee'),
      role: 'viewer',
      tokenHash: createHash('sha256').update(token).digest('hex'),
      expiresAt: new Date(Date.now() + 3_600_000),
      invitedById: ada.id,
    });
    const res = await request(api.app).post('/api/invitations/accept').send({ token, name: 'Ivy Invitee', password: 'a-long-password' });
    expect(res.status).toBe(201);
    expect(res.headers['cache-control']).toBe('no-store');
  });

  it('creating a case link answers with Cache-Control: no-store', async () => {
    const lab = await createLab([[bob, 'owner']]);
    const auth = `Bearer ${await tokenFor(api.app, bob)}`;
    const { templateCase } = await import('../../shared/case');
    const created = await request(api.app).post(`/api/labs/${lab.id}/cases`).set('Authorization', auth).send({ title: 'Linked', params: templateCase() });
    const res = await request(api.app).post(`/api/cases/${created.body.id}/links`).set('Authorization', auth).send({ revision: 1 });
    expect(res.status).toBe(201);
    expect(res.headers['cache-control']).toBe('no-store');
  });
});

// Each attempt hashes with argon2: allow for a busy machine.
describe('per-account sign-in back-off', { timeout: 90_000 }, () => {
  const env = { QP_SIGNIN_ACCOUNT_FREE_FAILURES: '2', QP_SIGNIN_ACCOUNT_BASE_DELAY_MS: '1500', QP_SIGNIN_ACCOUNT_MAX_DELAY_MS: '3000' };

  it('after the free failures, makes that account wait (even with the right password), others not', async () => {
    const app = api.appWith(env);
    const statuses: number[] = [];
    for (let i = 0; i < 3; i++) statuses.push((await signIn(app, ada.email, 'wrong-guess')).status);
    expect(statuses).toEqual([401, 401, 401]);
    const blocked = await signIn(app, ada.email.toUpperCase(), PASSWORD);
    expect(blocked.status).toBe(429);
    expect(errorOf(blocked)).toMatchObject({ code: 'too_many_attempts', message: expect.stringMatching(/for this account; try again in 2 seconds/) });
    expect(Number(blocked.headers['retry-after'])).toBeGreaterThanOrEqual(1);
    expect(Number(blocked.headers['retry-after'])).toBeLessThanOrEqual(2);
    expect((await signIn(app, bob.email, PASSWORD)).status).toBe(200);
    // The same words for an unknown address: the limiter does not tell which accounts exist.
    const ghost = `ghost-${randomUUID()}@quiverpoint.test`;
    for (let i = 0; i < 3; i++) await signIn(app, ghost, 'wrong-guess');
    expect((await signIn(app, ghost, 'wrong-guess')).status).toBe(429);
  });

  it('lets the owner in once the delay has passed, and a success clears the count', async () => {
    const app = api.appWith(env);
    for (let i = 0; i < 3; i++) await signIn(app, bob.email, 'wrong-guess');
    expect((await signIn(app, bob.email, PASSWORD)).status).toBe(429);
    await new Promise((resolve) => setTimeout(resolve, 1600));
    expect((await signIn(app, bob.email, PASSWORD)).status).toBe(200);
    const again: number[] = [];
    for (let i = 0; i < 2; i++) again.push((await signIn(app, bob.email, 'wrong-guess')).status);
    expect(again).toEqual([401, 401]);
    expect((await signIn(app, bob.email, PASSWORD)).status).toBe(200);
  });
});
