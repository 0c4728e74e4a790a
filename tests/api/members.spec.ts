import type { Express } from 'express';
import { Op, QueryTypes } from 'sequelize';
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { AuditEvent, Invitation, Membership, OutboxMail, SinkMail, type Lab, type LabRole, type User } from '../../server/db/models';
import { createLogger } from '../../server/logger';
import { startMailSink, type MailSink } from '../../server/scripts/mail-sink';
import { addMember } from '../../server/services/lab-service';
import { hashToken } from '../../server/services/tokens';
import { createMailer } from '../../server/services/mailer';
import { startOutboxSender } from '../../server/services/outbox-service';
import { createLab, createUser, errorOf, startApi, tokenFor, uniqueEmail, type TestApi } from './support';

const ROLES: LabRole[] = ['owner', 'analyst', 'reviewer', 'viewer'];
let api: TestApi;
let sink: MailSink;
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
  api = startApi();
  sink = await startMailSink({ port: 0 });
  for (const who of [...ROLES, 'outsider'] as const) people[who] = await createUser(who);
  lab = await createLab(ROLES.map((role) => [people[role], role]));
  for (const who of [...ROLES, 'outsider'] as const) tokens[who] = await tokenFor(api.app, people[who]);
});
afterAll(async () => {
  await sink.close();
  await api.close();
});

/** The PostgreSQL transaction that wrote a row (its `xmin`); rows written in one transaction share it. */
async function writerOf(table: 'invitations' | 'outbox' | 'audit_events', id: string | number): Promise<string> {
  const rows = await api.sequelize.query<{ xid: string }>(`SELECT xmin::text AS xid FROM ${table} WHERE id = :id`, {
    replacements: { id },
    type: QueryTypes.SELECT,
  });
  const xid = rows[0]?.xid;
  if (!xid) throw new Error(`no ${table} row ${id}`);
  return xid;
}

/** The one-time token inside a queued (not yet sent) invitation mail. */
async function queuedToken(email: string): Promise<string> {
  const mail = await OutboxMail.findOne({ where: { toAddress: email }, order: [['id', 'DESC']] });
  const token = mail?.textBody.match(/\/invitations\/([A-Za-z0-9_-]+)/)?.[1];
  if (!token) throw new Error(`no queued invitation mail for ${email}`);
  return token;
}

async function invite(email: string, role: LabRole = 'viewer'): Promise<string> {
  const res = await as('owner').post(`/api/labs/${lab.id}/members`, { email, role });
  expect(res.status).toBe(201);
  return String(res.body.invitation.id);
}

describe('GET /api/labs', () => {
  it('lists only my labs with my role', async () => {
    const res = await as('reviewer').get('/api/labs');
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ total: 1, page: 1, pageSize: 20 });
    expect(res.body.items).toEqual([{ id: lab.id, name: lab.name, role: 'reviewer' }]);
    const outsider = await as('outsider').get('/api/labs');
    expect(outsider.body).toMatchObject({ items: [], total: 0 });
  });

  it('refuses a bad page size with the field named', async () => {
    const res = await as('owner').get('/api/labs?pageSize=0');
    expect(res.status).toBe(400);
    expect(errorOf(res)).toMatchObject({ code: 'invalid_field', field: 'pageSize' });
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

  it('invites an unknown address: the invitation, its outbox mail and the audit event commit in one transaction', async () => {
    const email = uniqueEmail('invitee');
    const res = await as('owner').post(`/api/labs/${lab.id}/members`, { email, role: 'reviewer' });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ kind: 'invitation', queued: true, invitation: { email, role: 'reviewer', labId: lab.id } });
    expect(res.body).not.toHaveProperty('mailed');
    expect(JSON.stringify(res.body)).not.toMatch(/token/i);

    const stored = await Invitation.findOne({ where: { email } });
    const mail = await OutboxMail.findOne({ where: { toAddress: email } });
    const audit = await AuditEvent.findOne({ where: { labId: lab.id, action: 'member.invited' }, order: [['id', 'DESC']] });
    expect(stored?.id).toBe(res.body.invitation.id);
    expect(mail).toMatchObject({ subject: 'You are invited to a Quiverpoint lab', attempts: 0, sentAt: null });
    expect(audit?.details).toEqual({ email, role: 'reviewer' });
    if (!stored || !mail || !audit) throw new Error('a row is missing');
    const writer = await writerOf('invitations', stored.id);
    expect(await writerOf('outbox', mail.id)).toBe(writer);
    expect(await writerOf('audit_events', audit.id)).toBe(writer);

    const token = await queuedToken(email);
    expect(mail.textBody).toContain(`${api.config.publicUrl}/invitations/${token}`);
    expect(stored.tokenHash).toBe(hashToken(token));
    expect(stored.tokenHash).not.toContain(token);
  });

  it('writes neither the invitation nor a mail when the transaction fails part-way', async () => {
    const email = uniqueEmail('rolled-back');
    // An unusable public address makes composing the link throw after the invitation row was inserted.
    const failing = addMember(api.sequelize, { id: people.owner.id, name: people.owner.name }, lab.id, email, 'viewer', {
      publicUrl: 'not a url',
      invitationTtlHours: 1,
    });
    await expect(failing).rejects.toThrow(/URL/i);
    expect(await Invitation.count({ where: { email } })).toBe(0);
    expect(await OutboxMail.count({ where: { toAddress: email } })).toBe(0);
  });

  it('the outbox sender loop delivers the invitation to the local mail sink, and its link creates the account', async () => {
    const email = uniqueEmail('delivered');
    await invite(email, 'reviewer');
    const sender = startOutboxSender({
      sequelize: api.sequelize,
      sendMail: createMailer({ smtpHost: '127.0.0.1', smtpPort: sink.port, mailFrom: 'Quiverpoint <no-reply@quiverpoint.localhost>' }),
      logger: createLogger('silent'),
      intervalMs: 50,
    });
    const deadline = Date.now() + 15_000;
    let row = await OutboxMail.findOne({ where: { toAddress: email } });
    while (!row?.sentAt && Date.now() < deadline) {
      await new Promise((r) => setTimeout(r, 100));
      row = await OutboxMail.findOne({ where: { toAddress: email } });
    }
    await sender.stop();
    expect(row?.sentAt).not.toBeNull();
    expect(row).toMatchObject({ attempts: 1, textBody: '', htmlBody: null, lastError: null });

    const caught = await SinkMail.findOne({ where: { rcptTo: { [Op.contains]: [email] } } });
    expect(caught?.subject).toBe('You are invited to a Quiverpoint lab');
    expect(caught?.textBody).toContain('as reviewer');
    const token = caught?.textBody.match(/\/invitations\/([A-Za-z0-9_-]+)/)?.[1];
    expect(token).toBeTruthy();

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
    await Membership.destroy({ where: { labId: lab.id, userId: accepted.body.user.id } });
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

describe('pending invitations', () => {
  it('lists pending invitations (email, role, invited, expires) newest first, without accepted or expired ones', async () => {
    const first = uniqueEmail('pending-a');
    const second = uniqueEmail('pending-b');
    await invite(first, 'analyst');
    await invite(second, 'viewer');
    const expired = await Invitation.create({
      labId: lab.id, email: uniqueEmail('expired'), role: 'viewer', tokenHash: hashToken(uniqueEmail('t')), expiresAt: new Date(Date.now() - 1_000), invitedById: people.owner.id,
    });
    const used = await Invitation.create({
      labId: lab.id, email: uniqueEmail('used'), role: 'viewer', tokenHash: hashToken(uniqueEmail('t')), expiresAt: new Date(Date.now() + 3_600_000), acceptedAt: new Date(), invitedById: people.owner.id,
    });
    const res = await as('owner').get(`/api/labs/${lab.id}/invitations`);
    expect(res.status).toBe(200);
    const emails = res.body.items.map((i: { email: string }) => i.email);
    expect(emails.indexOf(second)).toBeGreaterThanOrEqual(0);
    expect(emails.indexOf(second)).toBeLessThan(emails.indexOf(first));
    expect(emails).not.toContain(expired.email);
    expect(emails).not.toContain(used.email);
    expect(res.body.total).toBe(res.body.items.length);
    const item = res.body.items.find((i: { email: string }) => i.email === first);
    expect(Object.keys(item).sort()).toEqual(['email', 'expiresAt', 'id', 'invitedAt', 'labId', 'role']);
    expect(item.role).toBe('analyst');
    const lifetimeHours = (Date.parse(item.expiresAt) - Date.parse(item.invitedAt)) / 3_600_000;
    expect(Math.abs(lifetimeHours - api.config.invitationTtlHours)).toBeLessThan(0.01);
  });

  it('revokes an invitation: it leaves the list, its token no longer accepts, and the audit says so', async () => {
    const email = uniqueEmail('revoked');
    const id = await invite(email);
    const token = await queuedToken(email);
    const res = await as('owner').delete(`/api/labs/${lab.id}/invitations/${id}`);
    expect(res.status).toBe(204);
    const list = await as('owner').get(`/api/labs/${lab.id}/invitations`);
    expect(list.body.items.map((i: { id: string }) => i.id)).not.toContain(id);
    const accept = await request(api.app).post('/api/invitations/accept').send({ token, name: 'Too Late', password: 'a-long-password' });
    expect(accept.status).toBe(404);
    expect(errorOf(accept).code).toBe('invitation_invalid');
    const audit = await AuditEvent.findOne({ where: { labId: lab.id, action: 'invitation.revoked' }, order: [['id', 'DESC']] });
    expect(audit).toMatchObject({ actorId: people.owner.id, details: { email, role: 'viewer' } });
    const again = await as('owner').delete(`/api/labs/${lab.id}/invitations/${id}`);
    expect(again.status).toBe(404);
    expect(errorOf(again)).toMatchObject({ code: 'invitation_not_found', field: 'invitationId' });
  });

  it('answers 404 for an invitation of another lab and 400 for an id that is not one', async () => {
    const otherOwner = await createUser('other-owner');
    const other = await createLab([[otherOwner, 'owner']]);
    const foreign = await Invitation.create({
      labId: other.id, email: uniqueEmail('foreign'), role: 'viewer', tokenHash: hashToken(uniqueEmail('t')), expiresAt: new Date(Date.now() + 3_600_000), invitedById: otherOwner.id,
    });
    const cross = await as('owner').delete(`/api/labs/${lab.id}/invitations/${foreign.id}`);
    expect(cross.status).toBe(404);
    expect(await Invitation.count({ where: { id: foreign.id } })).toBe(1);
    const bad = await as('owner').delete(`/api/labs/${lab.id}/invitations/not-a-uuid`);
    expect(bad.status).toBe(400);
    expect(errorOf(bad)).toMatchObject({ code: 'invalid_field', field: 'invitationId' });
  });

  it.each(['analyst', 'reviewer', 'viewer'] as const)('%s may neither list nor revoke invitations (403)', async (role) => {
    const id = await invite(uniqueEmail(`kept-${role}`));
    const list = await as(role).get(`/api/labs/${lab.id}/invitations`);
    const del = await as(role).delete(`/api/labs/${lab.id}/invitations/${id}`);
    expect([list.status, del.status]).toEqual([403, 403]);
    expect(errorOf(list)).toMatchObject({ code: 'role_too_low' });
    expect(await Invitation.count({ where: { id } })).toBe(1);
  });

  it('a non-member gets 403 and a request without a token 401', async () => {
    const id = await invite(uniqueEmail('kept-outsider'));
    const list = await as('outsider').get(`/api/labs/${lab.id}/invitations`);
    const del = await as('outsider').delete(`/api/labs/${lab.id}/invitations/${id}`);
    expect([list.status, del.status]).toEqual([403, 403]);
    expect(errorOf(del).code).toBe('not_a_member');
    const anonymous = await request(api.app).get(`/api/labs/${lab.id}/invitations`);
    const anonymousDelete = await request(api.app).delete(`/api/labs/${lab.id}/invitations/${id}`);
    expect([anonymous.status, anonymousDelete.status]).toEqual([401, 401]);
    expect(await Invitation.count({ where: { id } })).toBe(1);
  });
});
