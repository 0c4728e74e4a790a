import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { SinkMail } from '../../server/db/models';
import { startMailSink, type MailSink } from '../../server/scripts/mail-sink';
import { createMailer } from '../../server/services/mailer';
import { startApi, uniqueEmail, type TestApi } from './support';

let api: TestApi;
let sink: MailSink;

beforeAll(async () => {
  api = startApi();
  sink = await startMailSink({ port: 0 });
});
afterAll(async () => {
  await sink.close();
  await api.close();
});

describe('local mail sink', () => {
  it('stores a message sent over SMTP in sink_mails', async () => {
    const to = uniqueEmail('mail');
    const send = createMailer({ smtpHost: '127.0.0.1', smtpPort: sink.port, mailFrom: 'Quiverpoint <no-reply@quiverpoint.localhost>' });
    await send({ to, subject: 'Sink check', text: 'Hello from the test.\n' });
    const stored = await SinkMail.findOne({ where: { subject: 'Sink check' }, order: [['id', 'DESC']] });
    expect(stored?.rcptTo).toEqual([to]);
    expect(stored?.mailFrom).toBe('no-reply@quiverpoint.localhost');
    expect(stored?.textBody.trim()).toBe('Hello from the test.');
    expect(stored?.raw).toContain('Subject: Sink check');
  });
});
