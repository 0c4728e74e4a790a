import type { RequestHandler } from 'express';
import { outboxQuerySchema, pageQuerySchema } from '../../shared/api';
import { AppError } from '../app-error';
import type { Config } from '../config';
import { parseInput } from '../middleware/validate';
import { listOutbox, listSinkMails } from '../services/admin-service';

export const outboxRoute: RequestHandler = async (req, res) => {
  res.json(await listOutbox(parseInput(outboxQuerySchema, req.query, 'query')));
};

/** What the local mail sink caught; only where the sink can run (not in production without QP_MAIL_SINK). */
export function sinkMailsRoute(config: Config): RequestHandler {
  return async (req, res) => {
    if (config.env === 'production' && !config.mailSink) throw new AppError('mail_sink_off', 'The local mail sink is not running here.', 404);
    res.json(await listSinkMails(parseInput(pageQuerySchema, req.query, 'query')));
  };
}
