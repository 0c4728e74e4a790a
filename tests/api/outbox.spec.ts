import { createServer, type Server } from 'node:net';
import { Op } from 'sequelize';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { OutboxMail, SinkMail } from '../../server/db/models';
import { startMailSink, type MailSink } from '../../server/scripts/mail-sink';
import { createMailer } from '../../server/services/mailer';
import { createLogger } from '../../server/logger';
import { MAX_ATTEMPTS, deliverDueMail, enqueueMail, retryDelayMs, startOutboxSender } from '../../server/services/outbox-service';
import { createLab, createUser, startApi, tokenFor, uniqueEmail, type TestApi } from './support';
import { client } from './library-support';

let api: TestApi;
let sink: MailSink;
let closedPort: number;
const FROM = 'Quiverpoint <no-reply@quiverpoint.localhost>';

/** A port that nothing listens on: bind one, remember it, close it. */
function closedLocalPort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const probe: Server = createServer();
    probe.once('error', reject);
    probe.listen(0, '127.0.0.1', () => {
      const address = probe.address();
      const port = typeof address === 'object' && address ? address.port : 0;
      probe.close(() => resolve(port));
    });
  });
}

beforeAll(async () => {
  api = startApi();
  sink = await startMailSink({ port: 0 });
  closedPort = await closedLocalPort();
  // Earlier test files leave due mail behind; send it first so each test's own row is in the first batch.
  const drain = createMailer({ smtpHost: '127.0.0.1', smtpPort: sink.port, mailFrom: FROM });
  while ((await deliverDueMail(api.sequelize, drain, { limit: 200 })).sent > 0);
});
afterAll(async () => {
  await sink.close();
  await api.close();
});

describe('mail outbox', () => {
  it('keeps a mail it could not deliver, with the attempt and the error, then sends it when SMTP answers', async () => {
    const to = uniqueEmail('outbox');
    const row = await enqueueMail({ to, subject: 'Outbox retry check', text: 'Hello through the outbox.\n', html: '<p>Hello through the outbox.</p>' });
    const closed = createMailer({ smtpHost: '127.0.0.1', smtpPort: closedPort, mailFrom: FROM });
    const now = new Date();
    const first = await deliverDueMail(api.sequelize, closed, { now });
    expect(first.failed).toBeGreaterThanOrEqual(1);
    await row.reload();
    expect(row.attempts).toBe(1);
    expect(row.sentAt).toBeNull();
    expect(row.lastError).toMatch(/ECONNREFUSED|connect/i);
    expect(row.nextAttemptAt?.getTime()).toBe(now.getTime() + retryDelayMs(1));

    const open = createMailer({ smtpHost: '127.0.0.1', smtpPort: sink.port, mailFrom: FROM });
    const tooEarly = await deliverDueMail(api.sequelize, open, { now: new Date(now.getTime() + 1_000) });
    expect(tooEarly.sent).toBe(0);
    await row.reload();
    expect(row.attempts).toBe(1);

    const later = await deliverDueMail(api.sequelize, open, { now: new Date(now.getTime() + retryDelayMs(1) + 1) });
    expect(later.sent).toBeGreaterThanOrEqual(1);
    await row.reload();
    expect(row.attempts).toBe(2);
    expect(row.sentAt).not.toBeNull();
    expect(row.nextAttemptAt).toBeNull();
    expect(row.lastError).toBeNull();
    expect(row.textBody).toBe('');
    expect(row.htmlBody).toBeNull();
    const caught = await SinkMail.findOne({ where: { subject: 'Outbox retry check' }, order: [['id', 'DESC']] });
    expect(caught?.rcptTo).toEqual([to]);
    expect(caught?.textBody.trim()).toBe('Hello through the outbox.');
    expect(caught?.raw).toContain('text/html');
  });

  it('backs off exponentially and gives up after the last attempt', async () => {
    expect([1, 2, 3].map(retryDelayMs)).toEqual([30_000, 60_000, 120_000]);
    expect(retryDelayMs(20)).toBe(3_600_000);
    const row = await enqueueMail({ to: uniqueEmail('give-up'), subject: 'Never arrives', text: 'x' });
    await row.update({ attempts: MAX_ATTEMPTS - 1 });
    const closed = createMailer({ smtpHost: '127.0.0.1', smtpPort: closedPort, mailFrom: FROM });
    await deliverDueMail(api.sequelize, closed, { now: new Date(Date.now() + 1_000) });
    await row.reload();
    expect(row.attempts).toBe(MAX_ATTEMPTS);
    expect(row.nextAttemptAt).toBeNull();
    expect(row.sentAt).toBeNull();
    expect(row.textBody).toBe('');
    const admin = await createUser('outbox-admin', { isSiteAdmin: true });
    const token = await tokenFor(api.app, admin);
    const failed = await client(api.app, token).get('/api/admin/outbox?state=failed&pageSize=200');
    expect(failed.status).toBe(200);
    expect(failed.body.items.find((m: { id: string }) => m.id === String(row.id))).toMatchObject({ state: 'failed', attempts: MAX_ATTEMPTS, subject: 'Never arrives' });
    const sent = await client(api.app, token).get('/api/admin/outbox?state=sent&pageSize=200');
    expect(sent.body.items.every((m: { state: string }) => m.state === 'sent')).toBe(true);
    const mails = await client(api.app, token).get('/api/admin/mails?pageSize=5');
    expect(mails.status).toBe(200);
    expect(mails.body.items.map((m: { subject: string }) => m.subject)).toContain('Outbox retry check');
  });

  it('the sender loop delivers queued mail on its own and stops cleanly', async () => {
    const row = await enqueueMail({ to: uniqueEmail('loop'), subject: 'Sent by the loop', text: 'x' });
    const delivered: string[] = [];
    const sender = startOutboxSender({
      sequelize: api.sequelize,
      sendMail: async (mail) => {
        delivered.push(mail.subject);
      },
      logger: createLogger('silent'),
      intervalMs: 50,
    });
    const deadline = Date.now() + 10_000;
    while (!delivered.includes('Sent by the loop') && Date.now() < deadline) await new Promise((r) => setTimeout(r, 50));
    await sender.stop();
    await row.reload();
    expect(row.sentAt).not.toBeNull();
    const count = delivered.length;
    await new Promise((r) => setTimeout(r, 200));
    expect(delivered.length).toBe(count);
  });

  it('keeps an invitation mail with its link until SMTP answers, then keeps no body', async () => {
    const owner = await createUser('inviting-owner');
    const lab = await createLab([[owner, 'owner']]);
    const email = uniqueEmail('queued-invitee');
    const res = await client(api.app, await tokenFor(api.app, owner)).post(`/api/labs/${lab.id}/members`, { email, role: 'viewer' });
    expect(res.status).toBe(201);
    expect(res.body).toMatchObject({ kind: 'invitation', queued: true });
    const queued = await OutboxMail.findOne({ where: { toAddress: email } });
    expect(queued).toMatchObject({ subject: 'You are invited to a Quiverpoint lab', attempts: 0, sentAt: null });
    expect(queued?.textBody).toMatch(/\/invitations\/[A-Za-z0-9_-]+/);
    if (!queued) throw new Error('no outbox row');

    const now = new Date();
    await deliverDueMail(api.sequelize, createMailer({ smtpHost: '127.0.0.1', smtpPort: closedPort, mailFrom: FROM }), { now, limit: 1000 });
    await queued.reload();
    expect(queued).toMatchObject({ attempts: 1, sentAt: null });
    expect(queued.textBody).toMatch(/\/invitations\/[A-Za-z0-9_-]+/);

    const open = createMailer({ smtpHost: '127.0.0.1', smtpPort: sink.port, mailFrom: FROM });
    await deliverDueMail(api.sequelize, open, { now: new Date(now.getTime() + retryDelayMs(1) + 1), limit: 1000 });
    await queued.reload();
    expect(queued.sentAt).not.toBeNull();
    expect(queued.textBody).toBe('');
    const caught = await SinkMail.findOne({ where: { rcptTo: { [Op.contains]: [email] } } });
    expect(caught?.textBody).toMatch(/\/invitations\/[A-Za-z0-9_-]+/);
  });

  it('sends a due mail once even when two senders run at the same time', async () => {
    await deliverDueMail(api.sequelize, async () => undefined, { now: new Date(Date.now() + 7_200_000), limit: 1000 });
    const row = await enqueueMail({ to: uniqueEmail('once'), subject: 'Exactly once', text: 'x' });
    let deliveries = 0;
    const slow = async () => {
      deliveries++;
      await new Promise((r) => setTimeout(r, 200));
    };
    await Promise.all([deliverDueMail(api.sequelize, slow), deliverDueMail(api.sequelize, slow)]);
    expect(deliveries).toBe(1);
    await row.reload();
    expect(row.attempts).toBe(1);
    expect(await OutboxMail.count({ where: { subject: 'Exactly once', sentAt: null } })).toBe(0);
  });
});
