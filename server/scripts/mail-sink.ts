/**
 * The local mail sink: an SMTP server on 127.0.0.1 that accepts every message and stores it in the `sink_mails`
 * table of the database the models are bound to, so nothing leaves the machine and an admin page can list them.
 */
import type { AddressInfo } from 'node:net';
import { simpleParser } from 'mailparser';
import { SMTPServer } from 'smtp-server';
import { SinkMail } from '../db/models';

export interface MailSink {
  port: number;
  close(): Promise<void>;
}

const MAX_BYTES = 5 * 1024 * 1024;

/** Starts the sink on `port` (0 picks a free one). The models must already be bound (createSequelize). */
export async function startMailSink(options: { port: number; host?: string; log?: (line: string) => void }): Promise<MailSink> {
  const log = options.log ?? (() => undefined);
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ['AUTH', 'STARTTLS'],
    size: MAX_BYTES,
    logger: false,
    banner: 'Quiverpoint local mail sink',
    onData(stream, session, callback) {
      const chunks: Buffer[] = [];
      stream.on('data', (chunk: Buffer) => chunks.push(chunk));
      stream.on('end', () => {
        const raw = Buffer.concat(chunks).toString('utf8');
        simpleParser(raw)
          .then((parsed) =>
            SinkMail.create({
              mailFrom: session.envelope.mailFrom ? session.envelope.mailFrom.address : '',
              rcptTo: session.envelope.rcptTo.map((r) => r.address),
              subject: parsed.subject ?? '',
              textBody: parsed.text ?? '',
              raw,
            }),
          )
          .then((mail) => {
            log(`mail ${mail.id} to ${mail.rcptTo.join(', ')}: ${mail.subject}`);
            callback();
          })
          .catch((err: unknown) => callback(err instanceof Error ? err : new Error(String(err))));
      });
    },
  });
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject);
    server.listen(options.port, options.host ?? '127.0.0.1', () => {
      server.off('error', reject);
      resolve();
    });
  });
  server.on('error', (err) => log(`mail sink error: ${err.message}`));
  const port = (server.server.address() as AddressInfo).port;
  return { port, close: () => new Promise<void>((resolve) => server.close(() => resolve())) };
}
