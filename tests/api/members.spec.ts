import type { Express } from 'express';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { AuditEvent, Invitation, Membership, type Lab, type LabRole, type User } from '../../server/db/models';
import type { OutgoingMail } from '../../server/services/mailer';
import { createLab, createUser, errorOf, startApi, tokenFor, uniqueEmail, type TestApi } from './support';

const ROLES: LabRole[] = ['owner', 'analyst', 'reviewer', 'viewer'];
const sent: OutgoingMail[] = [];
let api: TestApi;
let lab: Lab;
const people = {} as Record<LabRole | 'outsider', User>;
const tokens = {} as Record<LabRole | 'outsider', string>;

function as(who: LabRole | 'outsider', app: Express = api.app) {
  const auth = { Authorization: `Bearer ${tokens[who]}` };
  return {
    get: (url: string) => request(app).get(url).set(auth),
    post: (url: string, body: object) => request(app).post(url).set(auth).send(body),
    patch: (url: string, body: object) => request(app).patch(url).set(auth).send(body),
    delete: (url: string) => request(app).delete(url).set(auth),
  };
}

beforeAll(async () => {
  api = startApi({
    sendMail: async (mail) => {
      sent.push(mail);
    },
  });
  for (const who of [...ROLES, 'outsider'] as const) people[who] = await createUser(who);
  lab = await createLab(ROLES.map((role) => [people[role], role]));
  for (const who of [...ROLES, 'outsider'] as const) tokens[who] = await tokenFor(api.app, people[who]);
});
afterAll(() => api.close());

describe('GET /api/labs', () => {
  it('lists only my labs with my role', async () => {
    const res = await as('reviewer').get('/api/labs');
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ total: 1, limit: 100, offset: 0 });
    expect(res.body.items).toEqual([{ id: lab.id, name: lab.name, role: 'reviewer' }]);
    const outsider = await as('outsider').get('/api/labs');
    expect(outsider.body).toMatchObject({ items: [], total: 0 });
  });

  it('refuses a bad page size with the field named', async () => {
    const res = await as('owner').get('/api/labs?limit=0');
    expect(res.status).toBe(400);
    expect(errorOf(res)).toMatchObject({ code: 'invalid_field', field: 'limit' });
  });
});

describe('role matrix for member routes', () => {
  it.each(ROLES)('%s may list the members', async (role) => {
    const res = await as(role).get(`/api/labs/${lab.id}/members`);
    expect(res.status).toBe(200);
    expect(res.body.total).toBe(4);
    expect(res.body.items.map((m: { role: string }) => m.role).sort()).toEqual([...ROLES].sort());
  });

  it('a non-member may not list the members', async () => {
    const res = await as('outsider').get(`/api/labs/${lab.id}/members`);
    expect(res.status).toBe(403);
    expect(errorOf(res).code).toBe('not_a_member');
  });

  it.each(['analyst', 'reviewer', 'viewer'] as const)('%s may not add, re-role or remove members (403)', async (role) => {
    const add = await as(role).post(`/api/labs/${lab.id}/members`, { email: people.outsider.email, role: 'viewer' });
    const patch = await as(role).patch(`/api/labs/${lab.id}/members/${people.viewer.id}`, { role: 'analyst' });
    const del = await as(role).delete(`/api/labs/${lab.id}/members/${people.viewer.id}`);
    expect([add.status, patch.status, del.status]).toEqual([403, 403, 403]);
    expect(errorOf(add)).toMatchObject({ code: 'role_too_low', message: `This needs the owner role in this lab; you are ${role}.` });
    expect(await Membership.count({ where: { labId: lab.id } })).toBe(4);
  });

  it('a non-member may not change anything (403)', async () => {
    const add = await as('outsider').post(`/api/labs/${lab.id}/members`, { email: people.outsider.email, role: 'owner' });
    const patch = await as('outsider').patch(`/api/labs/${lab.id}/members/${people.viewer.id}`, { role: 'owner' });
    const del = await as('outsider').delete(`/api/labs/${lab.id}/members/${people.viewer.id}`);
    expect([add.status, patch.status, del.status]).toEqual([403, 403, 403]);
  });

  it('without a token every member route is 401', async () => {
    const res = await request(api.app).get(`/api/labs/${lab.id}/members`);
    expect(res.status).toBe(401);
  });
});

describe('owners manage members', () => {
  it('adds an existing account by email with a role', async () => {
    const newcomer = await createUser('newcomer');
    const res = await as('owner').post(`/api/labs/${lab.id}/members`, { email: newcomer.email.toUpperCase(), role: 'analyst' });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ kind: 'member', member: { userId: newcomer.id, email: newcomer.email, role: 'analyst' } });
    const again = await as('owner').post(`/api/labs/${lab.id}/members`, { email: newcomer.email, role: 'viewer' });
    expect(again.status).toBe(409);
    expect(errorOf(again)).toMatchObject({ code: 'already_member', field: 'email' });
    const removed = await as('owner').delete(`/api/labs/${lab.id}/members/${newcomer.id}`);
    expect(removed.status).toBe(204);
    expect(await Membership.count({ where: { labId: lab.id, userId: newcomer.id } })).toBe(0);
    const audit = await AuditEvent.findAll({ where: { labId: lab.id }, order: [['id', 'ASC']] });
    expect(audit.map((e) => e.action)).toEqual(expect.arrayContaining(['member.added', 'member.removed']));
  });

  it('invites an unknown address, mails a link, and the invitation creates the account', async () => {
    const email = uniqueEmail('invitee');
    const res = await as('owner').post(`/api/labs/${lab.id}/members`, { email, role: 'reviewer' });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ kind: 'invitation', mailed: true, invitation: { email, role: 'reviewer', labId: lab.id } });
    const mail = sent.find((m) => m.to === email);
    const token = mail?.text.match(/\/invitations\/([A-Za-z0-9_-]+)/)?.[1];
    expect(token).toBeTruthy();
    const stored = await Invitation.findOne({ where: { email } });
    expect(stored?.tokenHash).toMatch(/^[0-9a-f]{64}$/);
    expect(stored?.tokenHash).not.toContain(String(token));

    const missing = await request(api.app).post('/api/invitations/accept').send({ token });
    expect(missing.status).toBe(400);
    expect(errorOf(missing).field).toBe('name');
    const accepted = await request(api.app).post('/api/invitations/accept').send({ token, name: 'Ines Invitee', password: 'a-long-password' });
    expect(accepted.status).toBe(201);
    expect(accepted.body.user).toMatchObject({ email, name: 'Ines Invitee' });
    const me = await request(api.app).get('/api/me').set('Authorization', `Bearer ${accepted.body.token}`);
    expect(me.body.memberships).toEqual([{ labId: lab.id, labName: lab.name, role: 'reviewer' }]);
    const reused = await request(api.app).post('/api/invitations/accept').send({ token, name: 'x', password: 'another-password' });
    expect(reused.status).toBe(404);
    expect(errorOf(reused).code).toBe('invitation_invalid');
  });

  it('still creates the invitation when the mail cannot be sent', async () => {
    const failing = api.appWith({});
    const res = await request(failing)
      .post(`/api/labs/${lab.id}/members`)
      .set('Authorization', `Bearer ${tokens.owner}`)
      .send({ email: uniqueEmail('unmailed'), role: 'viewer' });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ kind: 'invitation', mailed: false });
  });

  it('changes a role', async () => {
    const res = await as('owner').patch(`/api/labs/${lab.id}/members/${people.viewer.id}`, { role: 'analyst' });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ userId: people.viewer.id, role: 'analyst' });
    const back = await as('owner').patch(`/api/labs/${lab.id}/members/${people.viewer.id}`, { role: 'viewer' });
    expect(back.body.role).toBe('viewer');
  });

  it('names a bad role or email in a 400', async () => {
    const badRole = await as('owner').patch(`/api/labs/${lab.id}/members/${people.viewer.id}`, { role: 'admin' });
    expect(badRole.status).toBe(400);
    expect(errorOf(badRole)).toMatchObject({ code: 'invalid_field', field: 'role' });
    const badEmail = await as('owner').post(`/api/labs/${lab.id}/members`, { email: 'not-an-email', role: 'viewer' });
    expect(badEmail.status).toBe(400);
    expect(errorOf(badEmail)).toMatchObject({ code: 'invalid_field', field: 'email' });
    const noRole = await as('owner').post(`/api/labs/${lab.id}/members`, { email: uniqueEmail('x') });
    expect(errorOf(noRole)).toMatchObject({ code: 'missing_field', field: 'role' });
  });

  it('answers 404 for someone who is not a member and for an unknown lab id', async () => {
    const res = await as('owner').patch(`/api/labs/${lab.id}/members/${people.outsider.id}`, { role: 'viewer' });
    expect(res.status).toBe(404);
    expect(errorOf(res).code).toBe('member_not_found');
    const badLab = await as('owner').get('/api/labs/not-a-uuid/members');
    expect(badLab.status).toBe(404);
    expect(errorOf(badLab).code).toBe('lab_not_found');
  });
});

describe('the last owner', () => {
  it('cannot be demoted or removed, but can once another owner exists', async () => {
    const solo = await createUser('solo-owner');
    const helper = await createUser('helper');
    const own = await createLab([[solo, 'owner'], [helper, 'analyst']]);
    const soloToken = await tokenFor(api.app, solo);
    const auth = { Authorization: `Bearer ${soloToken}` };

    const demote = await request(api.app).patch(`/api/labs/${own.id}/members/${solo.id}`).set(auth).send({ role: 'analyst' });
    expect(demote.status).toBe(409);
    expect(errorOf(demote)).toMatchObject({ code: 'last_owner', message: expect.stringMatching(/at least one owner/) });
    const remove = await request(api.app).delete(`/api/labs/${own.id}/members/${solo.id}`).set(auth);
    expect(remove.status).toBe(409);
    expect(await Membership.findOne({ where: { labId: own.id, userId: solo.id } })).toMatchObject({ role: 'owner' });

    const promote = await request(api.app).patch(`/api/labs/${own.id}/members/${helper.id}`).set(auth).send({ role: 'owner' });
    expect(promote.status).toBe(200);
    const stepDown = await request(api.app).patch(`/api/labs/${own.id}/members/${solo.id}`).set(auth).send({ role: 'viewer' });
    expect(stepDown.status).toBe(200);
    expect(stepDown.body.role).toBe('viewer');
  });
});
