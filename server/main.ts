/**
 * Starts the HTTP server: `tsx server/main.ts` in development, `node dist/server/server/main.js` in production.
 * With QP_MAIL_SINK=true it also runs the local mail sink; the outbox sender loop always runs. SIGINT/SIGTERM close
 * the server, the outbox loop, the sink, then the database pool.
 */
import { createApp } from './app';
import { config } from './config';
import { createSequelize } from './db/sequelize';
import { createLogger } from './logger';
import { startMailSink, type MailSink } from './scripts/mail-sink';
import { createMailer } from './services/mailer';
import { startOutboxSender } from './services/outbox-service';
import { RunVerifier } from './services/run-verifier';
import { JobService } from './jobs/job-service';
import { queueOptions, startQueue } from './jobs/queue';

async function main(): Promise<void> {
  const cfg = config();
  const logger = createLogger(cfg.logLevel);
  const sequelize = createSequelize(cfg.databaseUrl);
  let sink: MailSink | undefined;
  if (cfg.mailSink) {
    sink = await startMailSink({ port: cfg.smtpPort, host: cfg.smtpHost, log: (line) => logger.info(line) });
    logger.info({ smtp: `${cfg.smtpHost}:${sink.port}` }, 'local mail sink listening');
  }
  const verifier = new RunVerifier({ logger, threads: cfg.verifyThreads });
  const boss = await startQueue(queueOptions(cfg));
  boss.on('error', (err) => logger.error({ err }, 'queue error'));
  const jobs = new JobService(sequelize, boss);
  const app = createApp({ config: cfg, sequelize, logger, verifier, jobs });
  verifier
    .resumePending()
    .then((count) => count > 0 && logger.info({ count }, 'verifying stored runs left pending'))
    .catch((err: unknown) => logger.error({ err }, 'cannot list the stored runs left pending'));
  const outbox = startOutboxSender({ sequelize, sendMail: createMailer(cfg), logger });
  const server = app.listen(cfg.port, cfg.host, (err?: Error) => {
    if (err) {
      logger.fatal({ err }, `cannot listen on ${cfg.host}:${cfg.port}`);
      process.exit(1);
    }
    const address = server.address();
    const port = typeof address === 'object' && address ? address.port : cfg.port;
    logger.info({ url: `http://${cfg.host}:${port}/`, env: cfg.env }, 'listening');
  });
  let closing = false;
  const shutdown = (signal: string) => {
    if (closing) return;
    closing = true;
    logger.info({ signal }, 'shutting down');
    server.close(() => {
      Promise.allSettled([outbox.stop(), verifier.stop(), boss.stop({ graceful: false, wait: false })])
        .finally(() => Promise.allSettled([sink?.close(), sequelize.close()]))
        .finally(() => process.exit(0));
    });
    server.closeIdleConnections();
    setTimeout(() => process.exit(1), 10_000).unref();
  };
  process.on('SIGINT', () => shutdown('SIGINT'));
  process.on('SIGTERM', () => shutdown('SIGTERM'));
}

main().catch((err: unknown) => {
  console.error(err);
  process.exit(1);
});
