/**
 * Starts the HTTP server: `tsx server/main.ts` in development, `node dist/server/server/main.js` in production.
 * SIGINT/SIGTERM close the server, then the database pool.
 */
import { createApp } from './app';
import { config } from './config';
import { createSequelize } from './db/sequelize';
import { createLogger } from './logger';

async function main(): Promise<void> {
  const cfg = config();
  const logger = createLogger(cfg.logLevel);
  const sequelize = createSequelize(cfg.databaseUrl);
  const app = createApp({ config: cfg, sequelize, logger });
  const server = app.listen(cfg.port, cfg.host, () => {
    const address = server.address();
    const port = typeof address === 'object' && address ? address.port : cfg.port;
    logger.info({ url: `http://${cfg.host}:${port}/`, env: cfg.env }, 'listening');
  });
  server.on('error', (err) => {
    logger.fatal({ err }, 'server failed');
    process.exit(1);
  });
  let closing = false;
  const shutdown = (signal: string) => {
    if (closing) return;
    closing = true;
    logger.info({ signal }, 'shutting down');
    server.close(() => {
      sequelize.close().finally(() => process.exit(0));
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
