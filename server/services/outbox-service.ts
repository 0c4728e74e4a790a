/**
 * The mail outbox. Changes that notify someone write an outbox row in their own transaction (`enqueueMail`), so a
 * mail exists exactly when the change committed. A sender loop in the server process delivers due rows over SMTP;
 * a failure keeps the row with one more attempt, the last error and a later next attempt (exponential backoff),
 * until MAX_ATTEMPTS, after which the row stays unsent with no next attempt. A row that reaches either end (sent or
 * given up) loses its body: mails can carry one-time links (invitations), and nothing reads a finished body again.
 */
import { Op, type Sequelize, type Transaction } from 'sequelize';
import { OutboxMail } from '../db/models';
import type { Logger } from '../logger';
import type { OutgoingMail, SendMail } from './mailer';

/** What a finished row keeps instead of its text and html. */
const CLEARED_BODY = { textBody: '', htmlBody: null };

export const MAX_ATTEMPTS = 8;
const FIRST_RETRY_MS = 30_000;
const LONGEST_RETRY_MS = 3_600_000;
/** How often the sender loop looks for due mail. */
export const OUTBOX_POLL_MS = 5_000;

/** Delay before attempt `attempts + 1` after `attempts` failures: 30 s, 1 min, 2 min, ... capped at one hour. */
export function retryDelayMs(attempts: number): number {
  return Math.min(FIRST_RETRY_MS * 2 ** Math.max(0, attempts - 1), LONGEST_RETRY_MS);
}

export async function enqueueMail(mail: OutgoingMail, transaction?: Transaction): Promise<OutboxMail> {
  return OutboxMail.create(
    { toAddress: mail.to, subject: mail.subject, textBody: mail.text, htmlBody: mail.html ?? null, nextAttemptAt: new Date() },
    { transaction },
  );
}

export interface DeliveryReport {
  sent: number;
  failed: number;
}

/**
 * Sends every due row once (up to `limit`). Rows are locked with SKIP LOCKED, so two server processes never send
 * the same mail twice.
 */
export async function deliverDueMail(sequelize: Sequelize, sendMail: SendMail, options: { now?: Date; limit?: number } = {}): Promise<DeliveryReport> {
  const now = options.now ?? new Date();
  const report: DeliveryReport = { sent: 0, failed: 0 };
  await sequelize.transaction(async (transaction) => {
    const due = await OutboxMail.findAll({
      where: { sentAt: null, nextAttemptAt: { [Op.lte]: now } },
      order: [['id', 'ASC']],
      limit: options.limit ?? 20,
      lock: transaction.LOCK.UPDATE,
      skipLocked: true,
      transaction,
    });
    for (const row of due) {
      const attempts = row.attempts + 1;
      try {
        await sendMail({ to: row.toAddress, subject: row.subject, text: row.textBody, ...(row.htmlBody ? { html: row.htmlBody } : {}) });
        await row.update({ attempts, sentAt: new Date(), nextAttemptAt: null, lastError: null, ...CLEARED_BODY }, { transaction });
        report.sent++;
      } catch (err) {
        const message = err instanceof Error ? err.message : String(err);
        const givenUp = attempts >= MAX_ATTEMPTS;
        const nextAttemptAt = givenUp ? null : new Date(now.getTime() + retryDelayMs(attempts));
        await row.update({ attempts, lastError: message.slice(0, 2000), nextAttemptAt, ...(givenUp ? CLEARED_BODY : {}) }, { transaction });
        report.failed++;
      }
    }
  });
  return report;
}

export interface OutboxSender {
  stop(): Promise<void>;
}

/** Runs deliverDueMail every `intervalMs` until stopped; one pass at a time. */
export function startOutboxSender(options: { sequelize: Sequelize; sendMail: SendMail; logger: Logger; intervalMs?: number }): OutboxSender {
  const interval = options.intervalMs ?? OUTBOX_POLL_MS;
  let stopped = false;
  let timer: NodeJS.Timeout | undefined;
  let pass: Promise<void> = Promise.resolve();
  const tick = () => {
    pass = deliverDueMail(options.sequelize, options.sendMail)
      .then((r) => {
        if (r.sent || r.failed) options.logger.info(r, 'outbox pass');
      })
      .catch((err: unknown) => options.logger.warn({ err }, 'outbox pass failed'))
      .finally(() => {
        if (!stopped) timer = setTimeout(tick, interval);
      });
  };
  timer = setTimeout(tick, 0);
  return {
    stop: async () => {
      stopped = true;
      clearTimeout(timer);
      await pass;
    },
  };
}
