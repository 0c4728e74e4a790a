import type { RequestHandler } from 'express';
import type { Sequelize } from 'sequelize';
import { AppError } from '../app-error';

/** 200 when the database answers within two seconds, 503 otherwise. */
export function healthRoute(sequelize: Sequelize): RequestHandler {
  return async (_req, res) => {
    const started = Date.now();
    try {
      await Promise.race([
        sequelize.query('SELECT 1'),
        new Promise((_resolve, reject) => setTimeout(() => reject(new Error('database check timed out')), 2_000).unref()),
      ]);
    } catch {
      throw new AppError('database_unavailable', 'The database is not reachable.', 503);
    }
    res.json({ status: 'ok', database: 'up', latencyMs: Date.now() - started });
  };
}
