/**
 * The Express application, separate from listen() so tests drive it with supertest against the real database.
 * Order: security headers, compression, logs, JSON body, the /api route table, the /api 404, the built client
 * (production), and the JSON error middleware last.
 */
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import compression from 'compression';
import express, { type Express, type RequestHandler } from 'express';
import { rateLimit } from 'express-rate-limit';
import helmet from 'helmet';
import { pinoHttp } from 'pino-http';
import type { Sequelize } from 'sequelize';
import { AppError } from './app-error';
import type { Config } from './config';
import { createLogger, redactUrl, type Logger } from './logger';
import { createAuthenticator } from './middleware/auth';
import { apiNotFound, jsonErrors } from './middleware/errors';
import { jsonBody } from './middleware/json-body';
import { ANY_LAB_ROLE, requireLabRole } from './middleware/roles';
import { signInRoute, signOutRoute } from './routes/auth-routes';
import { SignInBackoff } from './services/sign-in-backoff';
import { healthRoute } from './routes/health-routes';
import {
  acceptInvitationRoute, addMemberRoute, changeRoleRoute, invitationsRoute, membersRoute, myLabsRoute, removeMemberRoute, revokeInvitationRoute,
} from './routes/lab-routes';
import { meRoute } from './routes/me-routes';
import { requireCaseRole } from './middleware/case-access';
import { requireSiteAdmin } from './middleware/site-admin';
import { outboxRoute, sinkMailsRoute } from './routes/admin-routes';
import { deleteTraceRoute, listTracesRoute, receiveTraceFile, traceDownloadRoute, traceRoute, uploadTraceRoute } from './routes/bench-trace-routes';
import { createLinkRoute, listLinksRoute, publicLinkReportRoute, publicLinkRoute, revokeLinkRoute } from './routes/case-link-routes';
import {
  addCommentRoute, auditRoute, caseRoute, commentsRoute, createCaseRoute, duplicateCaseRoute, listCasesRoute, patchCaseRoute,
  recheckRequestRoute, recheckRoute, reportRoute, revisionRoute, saveRevisionRoute, storeRunRoute,
} from './routes/case-routes';

export interface AppOptions {
  config: Config;
  sequelize: Sequelize;
  logger?: Logger;
  /** serve the built Angular app (default: when config.env is production) */
  serveClient?: boolean;
}

/** An account's failed sign-ins are forgotten after this long without another failure. */
const SIGN_IN_FORGET_AFTER_MS = 15 * 60_000;

/** sha256 of `this.media='all'`, the handler Angular's build puts on its deferred stylesheet link. */
const DEFERRED_STYLESHEET_HANDLER = "'sha256-MhtPZXr7+LpJUY5qtMutB+qWfQtMaPccfe7QXtCcEYc='";

export function createApp(options: AppOptions): Express {
  const { config, sequelize } = options;
  const logger = options.logger ?? createLogger(config.logLevel);
  const authenticate = createAuthenticator(config.jwtSecret);
  const signInLimiter = rateLimit({
    windowMs: config.signInWindowMs,
    limit: config.signInLimit,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    handler: (_req, _res, next) =>
      next(new AppError('too_many_attempts', 'Too many sign-in attempts from this address; wait a minute and try again.', 429)),
  });

  const signInBackoff = new SignInBackoff({
    freeFailures: config.signInAccountFreeFailures,
    baseDelayMs: config.signInAccountBaseDelayMs,
    maxDelayMs: config.signInAccountMaxDelayMs,
    forgetAfterMs: SIGN_IN_FORGET_AFTER_MS,
  });

  const app = express();
  app.disable('x-powered-by');
  app.use(
    helmet({
      contentSecurityPolicy: {
        useDefaults: false,
        directives: {
          defaultSrc: ["'self'"],
          scriptSrc: ["'self'"],
          scriptSrcAttr: ["'unsafe-hashes'", DEFERRED_STYLESHEET_HANDLER],
          workerSrc: ["'self'", 'blob:'],
          childSrc: ["'self'", 'blob:'],
          styleSrc: ["'self'", "'unsafe-inline'"],
          imgSrc: ["'self'", 'data:', 'blob:'],
          fontSrc: ["'self'", 'data:'],
          connectSrc: ["'self'"],
          objectSrc: ["'none'"],
          baseUri: ["'self'"],
          formAction: ["'self'"],
          frameAncestors: ["'none'"],
        },
      },
      // Plain http on localhost must keep working; HSTS belongs to whatever terminates TLS in front of us.
      strictTransportSecurity: false,
    }),
  );
  app.use(compression());
  app.use(
    pinoHttp({
      logger,
      autoLogging: { ignore: (req) => req.url === '/api/health' },
      serializers: {
        req: (req: { id: unknown; method: string; url: string }) => ({ id: req.id, method: req.method, url: redactUrl(req.url) }),
        res: (res: { statusCode: number }) => ({ statusCode: res.statusCode }),
      },
    }),
  );
  app.use(jsonBody({ limit: '2mb' }));

  const api = express.Router();
  const owner = requireLabRole('owner');
  const anyRole = requireLabRole(...ANY_LAB_ROLE);
  const labAuthor = requireLabRole('owner', 'analyst');
  const caseReader = requireCaseRole(...ANY_LAB_ROLE);
  const caseAuthor = requireCaseRole('owner', 'analyst');
  const caseCommenter = requireCaseRole('owner', 'analyst', 'reviewer');
  const caseReviewer = requireCaseRole('owner', 'reviewer');
  const routes: Array<[method: 'get' | 'post' | 'patch' | 'delete', path: string, ...handlers: RequestHandler[]]> = [
    ['get', '/health', healthRoute(sequelize)],
    ['post', '/auth/sign-in', signInLimiter, signInRoute(config, signInBackoff)],
    ['post', '/auth/sign-out', authenticate, signOutRoute],
    ['post', '/invitations/accept', signInLimiter, acceptInvitationRoute(sequelize, config)],
    ['get', '/me', authenticate, meRoute],
    ['get', '/labs', authenticate, myLabsRoute],
    ['get', '/labs/:labId/members', authenticate, anyRole, membersRoute],
    ['post', '/labs/:labId/members', authenticate, owner, addMemberRoute(sequelize, config)],
    ['patch', '/labs/:labId/members/:userId', authenticate, owner, changeRoleRoute(sequelize)],
    ['delete', '/labs/:labId/members/:userId', authenticate, owner, removeMemberRoute(sequelize)],
    ['get', '/labs/:labId/invitations', authenticate, owner, invitationsRoute],
    ['delete', '/labs/:labId/invitations/:invitationId', authenticate, owner, revokeInvitationRoute(sequelize)],
    // case library (docs/api.md has the role matrix)
    ['get', '/labs/:labId/cases', authenticate, anyRole, listCasesRoute],
    ['post', '/labs/:labId/cases', authenticate, labAuthor, createCaseRoute(sequelize)],
    ['get', '/cases/:caseId', authenticate, caseReader, caseRoute],
    ['patch', '/cases/:caseId', authenticate, caseAuthor, patchCaseRoute(sequelize)],
    ['post', '/cases/:caseId/duplicate', authenticate, caseAuthor, duplicateCaseRoute(sequelize)],
    ['get', '/cases/:caseId/audit', authenticate, caseReader, auditRoute],
    ['post', '/cases/:caseId/revisions', authenticate, caseAuthor, saveRevisionRoute(sequelize)],
    ['get', '/cases/:caseId/revisions/:rev', authenticate, caseReader, revisionRoute],
    ['get', '/cases/:caseId/revisions/:rev/report.pdf', authenticate, caseReader, reportRoute],
    ['post', '/cases/:caseId/revisions/:rev/runs', authenticate, caseAuthor, storeRunRoute(sequelize)],
    ['get', '/cases/:caseId/revisions/:rev/comments', authenticate, caseReader, commentsRoute],
    ['post', '/cases/:caseId/revisions/:rev/comments', authenticate, caseCommenter, addCommentRoute(sequelize)],
    ['post', '/cases/:caseId/revisions/:rev/recheck-request', authenticate, caseAuthor, recheckRequestRoute(sequelize, config)],
    ['post', '/cases/:caseId/revisions/:rev/rechecks', authenticate, caseReviewer, recheckRoute(sequelize, config)],
    ['get', '/cases/:caseId/links', authenticate, caseReader, listLinksRoute],
    ['post', '/cases/:caseId/links', authenticate, caseAuthor, createLinkRoute(sequelize, config)],
    ['delete', '/cases/:caseId/links/:linkId', authenticate, caseAuthor, revokeLinkRoute(sequelize)],
    ['get', '/links/:token', publicLinkRoute],
    ['get', '/links/:token/report.pdf', publicLinkReportRoute],
    ['get', '/cases/:caseId/bench-traces', authenticate, caseReader, listTracesRoute],
    ['post', '/cases/:caseId/bench-traces', authenticate, caseAuthor, receiveTraceFile, uploadTraceRoute(sequelize)],
    ['get', '/cases/:caseId/bench-traces/:traceId', authenticate, caseReader, traceRoute],
    ['get', '/cases/:caseId/bench-traces/:traceId/download', authenticate, caseReader, traceDownloadRoute],
    ['delete', '/cases/:caseId/bench-traces/:traceId', authenticate, caseAuthor, deleteTraceRoute(sequelize)],
    ['get', '/admin/outbox', authenticate, requireSiteAdmin, outboxRoute],
    ['get', '/admin/mails', authenticate, requireSiteAdmin, sinkMailsRoute(config)],
  ];
  for (const [method, path, ...handlers] of routes) api[method](path, ...handlers);
  api.use(apiNotFound);
  app.use('/api', api);

  if (options.serveClient ?? config.env === 'production') serveClient(app, config.clientDir, logger);
  app.use(jsonErrors);
  return app;
}

/** Serves the built Angular app; any other GET outside /api gets index.html so client routes survive a reload. */
function serveClient(app: Express, clientDir: string, logger: Logger): void {
  const index = join(clientDir, 'index.html');
  if (!existsSync(index)) logger.warn({ clientDir }, 'built client not found; run `npx ng build`');
  app.use(
    express.static(clientDir, {
      index: false,
      setHeaders: (res, path) => {
        res.setHeader('Cache-Control', /-[A-Z0-9]{8,}\.(js|css)$/.test(path) ? 'public, max-age=31536000, immutable' : 'no-cache');
      },
    }),
  );
  app.get('/{*splat}', (req, res, next) => {
    if (req.path === '/api' || req.path.startsWith('/api/')) return next();
    res.setHeader('Cache-Control', 'no-cache');
    res.sendFile(index, (err) => {
      if (err) next(new AppError('client_missing', 'The web client is not built; run `npx ng build`.', 404));
    });
  });
}
