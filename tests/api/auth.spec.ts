import jwt from 'jsonwebtoken';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { User } from '../../server/db/models';
import { PASSWORD, createLab, createUser, errorOf, startApi, tokenFor, type TestApi } from './support';

let api: TestApi;
let ada: User;

beforeAll(async () => {
  api = startApi();
  ada = await createUser('ada');
});
afterAll(() => api.close());

describe('sign-in', () => {
  it('returns a short-lived bearer token and the user for the right password', async () => {
    const res = await request(api.app).post('/api/auth/sign-in').send({ email: ada.email.toUpperCase(), password: PASSWORD });
    expect(res.status).toBe(200);
    expect(res.body.tokenType).toBe('Bearer');
    expect(res.body.user).toEqual({ id: ada.id, email: ada.email, name: ada.name, isSiteAdmin: false });
    const claims = jwt.decode(res.body.token);
    expect(claims).toMatchObject({ sub: ada.id });
    const { exp, iat } = claims as { exp: number; iat: number };
    expect(exp - iat).toBe(api.config.jwtTtlSeconds);
    expect(Date.parse(res.body.expiresAt)).toBeGreaterThan(Date.now());
  });

  it('refuses a wrong password with 401 and a clear message', async () => {
    const res = await request(api.app).post('/api/auth/sign-in').send({ email: ada.email, password: 'not-the-password' });
    expect(res.status).toBe(401);
    expect(errorOf(res)).toEqual({ code: 'bad_credentials', message: 'The email or password is incorrect.' });
  });

  it('answers an unknown email exactly like a wrong password', async () => {
    const res = await request(api.app).post('/api/auth/sign-in').send({ email: 'nobody@quiverpoint.test', password: PASSWORD });
    expect(res.status).toBe(401);
    expect(errorOf(res).code).toBe('bad_credentials');
  });

  it('names the missing field with 400', async () => {
    const res = await request(api.app).post('/api/auth/sign-in').send({ email: ada.email });
    expect(res.status).toBe(400);
    expect(errorOf(res)).toMatchObject({ code: 'missing_field', field: 'password' });
  });

  it('names a field of the wrong type with 400', async () => {
    const res = await request(api.app).post('/api/auth/sign-in').send({ email: 42, password: PASSWORD });
    expect(res.status).toBe(400);
    expect(errorOf(res)).toMatchObject({ code: 'invalid_field', field: 'email' });
  });

  it('refuses malformed JSON with 400', async () => {
    const res = await request(api.app).post('/api/auth/sign-in').set('Content-Type', 'application/json').send('{"email": "a@b.c",');
    expect(res.status).toBe(400);
    expect(errorOf(res).code).toBe('malformed_json');
  });

  it('refuses a JSON body that is not an object', async () => {
    const res = await request(api.app).post('/api/auth/sign-in').send([ada.email, PASSWORD]);
    expect(res.status).toBe(400);
    expect(errorOf(res).code).toBe('invalid_body');
  });

  it('rate-limits repeated attempts from one address with 429', async () => {
    const limited = api.appWith({ QP_SIGNIN_LIMIT: '3', QP_SIGNIN_WINDOW_MS: '60000' });
    const statuses: number[] = [];
    for (let i = 0; i < 4; i++) {
      const res = await request(limited).post('/api/auth/sign-in').send({ email: ada.email, password: 'wrong-guess' });
      statuses.push(res.status);
      if (i === 3) expect(errorOf(res).code).toBe('too_many_attempts');
    }
    expect(statuses).toEqual([401, 401, 401, 429]);
    const right = await request(limited).post('/api/auth/sign-in').send({ email: ada.email, password: PASSWORD });
    expect(right.status).toBe(429);
    const elsewhere = await request(api.app).post('/api/auth/sign-in').send({ email: ada.email, password: PASSWORD });
    expect(elsewhere.status).toBe(200);
  });
});

describe('access tokens', () => {
  it('GET /api/me returns the user and their memberships', async () => {
    const lab = await createLab([[ada, 'analyst']]);
    const token = await tokenFor(api.app, ada);
    const res = await request(api.app).get('/api/me').set('Authorization', `Bearer ${token}`);
    expect(res.status).toBe(200);
    expect(res.body.user).toEqual({ id: ada.id, email: ada.email, name: ada.name, isSiteAdmin: false });
    expect(res.body.memberships).toContainEqual({ labId: lab.id, labName: lab.name, role: 'analyst' });
  });

  it('refuses a request without a token with 401', async () => {
    const res = await request(api.app).get('/api/me');
    expect(res.status).toBe(401);
    expect(errorOf(res).code).toBe('unauthenticated');
  });

  it('refuses a token signed with another key', async () => {
    const forged = jwt.sign({}, 'some-other-secret-of-sufficient-length-123', { subject: ada.id, jwtid: crypto.randomUUID(), expiresIn: 600 });
    const res = await request(api.app).get('/api/me').set('Authorization', `Bearer ${forged}`);
    expect(res.status).toBe(401);
    expect(errorOf(res).code).toBe('invalid_token');
  });

  it('refuses garbage in the Authorization header', async () => {
    const res = await request(api.app).get('/api/me').set('Authorization', 'Bearer not.a.jwt');
    expect(res.status).toBe(401);
    expect(errorOf(res).code).toBe('invalid_token');
  });

  it('refuses a signed token whose sub or jti is not a UUID with 401, not 500', async () => {
    const claims = [
      { sub: 'not-a-uuid', jti: crypto.randomUUID() },
      { sub: ada.id, jti: 'not-a-uuid' },
      { sub: `${ada.id}'; --`, jti: '' },
    ];
    for (const c of claims) {
      const token = jwt.sign(c, api.config.jwtSecret, { expiresIn: 600 });
      const res = await request(api.app).get('/api/me').set('Authorization', `Bearer ${token}`);
      expect(res.status, JSON.stringify(c)).toBe(401);
      expect(errorOf(res).code).toBe('invalid_token');
    }
  });

  it('refuses an expired token with 401 token_expired', async () => {
    const past = Math.floor(Date.now() / 1000) - 3600;
    const expired = jwt.sign({ sub: ada.id, jti: crypto.randomUUID(), iat: past - 1800, exp: past }, api.config.jwtSecret);
    const res = await request(api.app).get('/api/me').set('Authorization', `Bearer ${expired}`);
    expect(res.status).toBe(401);
    expect(errorOf(res)).toMatchObject({ code: 'token_expired', message: expect.stringMatching(/sign in again/) });
  });

  it('sign-out revokes that token only', async () => {
    const first = await tokenFor(api.app, ada);
    const second = await tokenFor(api.app, ada);
    const out = await request(api.app).post('/api/auth/sign-out').set('Authorization', `Bearer ${first}`);
    expect(out.status).toBe(204);
    const revoked = await request(api.app).get('/api/me').set('Authorization', `Bearer ${first}`);
    expect(revoked.status).toBe(401);
    expect(errorOf(revoked).code).toBe('token_revoked');
    const again = await request(api.app).post('/api/auth/sign-out').set('Authorization', `Bearer ${first}`);
    expect(again.status).toBe(401);
    const other = await request(api.app).get('/api/me').set('Authorization', `Bearer ${second}`);
    expect(other.status).toBe(200);
  });

  it('a token stays valid in a new app instance with the same secret', async () => {
    const token = await tokenFor(api.app, ada);
    const restarted = api.appWith({});
    const res = await request(restarted).get('/api/me').set('Authorization', `Bearer ${token}`);
    expect(res.status).toBe(200);
  });
});

describe('unknown routes and security headers', () => {
  it('answers an unknown /api route with a JSON 404', async () => {
    const res = await request(api.app).get('/api/no-such-thing?x=1');
    expect(res.status).toBe(404);
    expect(res.headers['content-type']).toMatch(/application\/json/);
    expect(errorOf(res)).toEqual({ code: 'not_found', message: 'No API route GET /api/no-such-thing.' });
  });

  it('sends a content security policy with no external hosts', async () => {
    const res = await request(api.app).get('/api/health');
    const csp = String(res.headers['content-security-policy']);
    expect(csp).toContain("script-src 'self'");
    expect(csp).toContain("worker-src 'self' blob:");
    expect(csp).toContain("img-src 'self' data: blob:");
    expect(csp).not.toMatch(/https?:/);
    expect(res.headers['x-powered-by']).toBeUndefined();
  });
});
