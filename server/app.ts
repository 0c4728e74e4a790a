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
import type { z } from 'zod';
import {
  addMemberResultSchema, auditEntrySchema, caseDetailSchema, caseListItemSchema, commentSchema, createdLinkSchema, healthSchema, invitationSchema,
  labSummarySchema, linkSchema, meSchema, memberSchema, outboxMailSchema, pagedSchema, publicCaseSchema, recheckSchema, revisionDetailSchema,
  jobListSchema, jobSchema, runSchema, signedInSchema, sinkMailSchema, traceDetailSchema, traceSummarySchema,
} from '../shared/api';
import { AppError } from './app-error';
import { checkReplies, declareReply } from './middleware/reply-contract';
import type { Config } from './config';
import type { RunVerifier } from './services/run-verifier';
import type { JobService } from './jobs/job-service';
import { cancelJobRoute, caseJobsRoute, jobEventsRoute, jobRoute, labJobsRoute, submitJobRoute } from './routes/job-routes';
import { createLogger, redactUrl, type Logger } from './logger';
import { createAuthenticator } from './middleware/auth';
import { apiNotFound, jsonErrors } from './middleware/errors';
import { jsonBody } from './middleware/json-body';
import { ANY_LAB_ROLE, requireLabRole } from './middleware/roles';
import { signInRoute, signOutRoute } from './routes/auth-routes';
import { CaseListCache } from './services/case-list-cache';
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
import { createLinkRoute, listLinksRoute, publicLinkReportRoute, publicLinkRunResultRoute, publicLinkRoute, revokeLinkRoute } from './routes/case-link-routes';
import {
  addCommentRoute, auditRoute, caseRoute, commentsRoute, createCaseRoute, duplicateCaseRoute, listCasesRoute, patchCaseRoute,
  recheckRequestRoute, recheckRoute, reportRoute, revisionRoute, runResultRoute, saveRevisionRoute, storeRunRoute,
} from './routes/case-routes';

export interface AppOptions {
  config: Config;
  sequelize: Sequelize;
  logger?: Logger;
  /** serve the built Angular app (default: when config.env is production) */
  serveClient?: boolean;
  /** reruns stored runs to verify them; without one, stored runs stay pending until a server with one starts */
  verifier?: RunVerifier;
  /** server jobs on the queue; without it the job routes answer 503 jobs_unavailable */
  jobs?: JobService;
  /**
   * Tests only: every JSON reply must parse against its route's schema (errors against the error body and the
   * code table), or the request fails with 500 `response_contract` naming the mismatch.
   */
  checkResponses?: boolean;
}

type Method = 'get' | 'post' | 'patch' | 'delete';

/** One line of the route table: the reply schema of a 2xx answer, or null when the route answers without JSON. */
export interface ApiRoute {
  method: Method;
  path: string;
  reply: z.ZodType | null;
  handlers: RequestHandler[];
}

function route(method: Method, path: string, reply: z.ZodType | null, ...handlers: RequestHandler[]): ApiRoute {
  return { method, path, reply, handlers };
}

/** An account's failed sign-ins are forgotten after this long without another failure. */
const SIGN_IN_FORGET_AFTER_MS = 15 * 60_000;

/** sha256 of `this.media='all'`, the handler Angular's build puts on its deferred stylesheet link. */
const DEFERRED_STYLESHEET_HANDLER = "'sha256-MhtPZXr7+LpJUY5qtMutB+qWfQtMaPccfe7QXtCcEYc='";

export function createApp(options: AppOptions): Express {
  const { config, sequelize } = options;
  const logger = options.logger ?? createLogger(config.logLevel);
  const authenticate = createAuthenticator(config.jwtSecret);
  // Case-list pages by (lab, library version, query); the version comes with the caller's memberships.
  const caseListCache = new CaseListCache();
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
  // The contract of each reply is the schema beside its route (shared/api); docs/api.md has the role matrix.
  const routes: ApiRoute[] = [
    route('get', '/health', healthSchema, healthRoute(sequelize)),
    route('post', '/auth/sign-in', signedInSchema, signInLimiter, signInRoute(config, signInBackoff)),
    route('post', '/auth/sign-out', null, authenticate, signOutRoute),
    route('post', '/invitations/accept', signedInSchema, signInLimiter, acceptInvitationRoute(sequelize, config)),
    route('get', '/me', meSchema, authenticate, meRoute),
    route('get', '/labs', pagedSchema(labSummarySchema), authenticate, myLabsRoute),
    route('get', '/labs/:labId/members', pagedSchema(memberSchema), authenticate, anyRole, membersRoute),
    route('post', '/labs/:labId/members', addMemberResultSchema, authenticate, owner, addMemberRoute(sequelize, config)),
    route('patch', '/labs/:labId/members/:userId', memberSchema, authenticate, owner, changeRoleRoute(sequelize)),
    route('delete', '/labs/:labId/members/:userId', null, authenticate, owner, removeMemberRoute(sequelize)),
    route('get', '/labs/:labId/invitations', pagedSchema(invitationSchema), authenticate, owner, invitationsRoute),
    route('delete', '/labs/:labId/invitations/:invitationId', null, authenticate, owner, revokeInvitationRoute(sequelize)),
    // case library
    route('get', '/labs/:labId/cases', pagedSchema(caseListItemSchema), authenticate, anyRole, listCasesRoute(caseListCache)),
    route('post', '/labs/:labId/cases', caseDetailSchema, authenticate, labAuthor, createCaseRoute(sequelize)),
    route('get', '/cases/:caseId', caseDetailSchema, authenticate, caseReader, caseRoute),
    route('patch', '/cases/:caseId', caseDetailSchema, authenticate, caseAuthor, patchCaseRoute(sequelize)),
    route('post', '/cases/:caseId/duplicate', caseDetailSchema, authenticate, caseAuthor, duplicateCaseRoute(sequelize)),
    route('get', '/cases/:caseId/audit', pagedSchema(auditEntrySchema), authenticate, caseReader, auditRoute),
    route('post', '/cases/:caseId/revisions', revisionDetailSchema, authenticate, caseAuthor, saveRevisionRoute(sequelize)),
    route('get', '/cases/:caseId/revisions/:rev', revisionDetailSchema, authenticate, caseReader, revisionRoute),
    // a PDF file, not JSON
    route('get', '/cases/:caseId/revisions/:rev/report.pdf', null, authenticate, caseReader, reportRoute),
    route('post', '/cases/:caseId/revisions/:rev/runs', runSchema, authenticate, caseAuthor, storeRunRoute(sequelize, options.verifier)),
    // the stored result as stored: gzip-compressed JSON (shared/engine/result-codec.ts)
    route('get', '/cases/:caseId/revisions/:rev/runs/:runId/result', null, authenticate, caseReader, runResultRoute),
    // server jobs: long runs of a saved revision computed by the worker processes (server/jobs)
    route('post', '/cases/:caseId/revisions/:rev/jobs', jobSchema, authenticate, caseAuthor, submitJobRoute(options.jobs)),
    route('get', '/cases/:caseId/jobs', jobListSchema, authenticate, caseReader, caseJobsRoute(options.jobs)),
    route('get', '/cases/:caseId/jobs/:jobId', jobSchema, authenticate, caseReader, jobRoute(options.jobs)),
    // server-sent events (text/event-stream), not one JSON reply
    route('get', '/cases/:caseId/jobs/:jobId/events', null, authenticate, caseReader, jobEventsRoute(options.jobs)),
    route('post', '/cases/:caseId/jobs/:jobId/cancel', jobSchema, authenticate, caseAuthor, cancelJobRoute(options.jobs)),
    route('get', '/labs/:labId/jobs', jobListSchema, authenticate, anyRole, labJobsRoute(options.jobs)),
    route('get', '/cases/:caseId/revisions/:rev/comments', pagedSchema(commentSchema), authenticate, caseReader, commentsRoute),
    route('post', '/cases/:caseId/revisions/:rev/comments', commentSchema, authenticate, caseCommenter, addCommentRoute(sequelize)),
    route('post', '/cases/:caseId/revisions/:rev/recheck-request', revisionDetailSchema, authenticate, caseAuthor, recheckRequestRoute(sequelize, config)),
    route('post', '/cases/:caseId/revisions/:rev/rechecks', recheckSchema, authenticate, caseReviewer, recheckRoute(sequelize, config)),
    route('get', '/cases/:caseId/links', pagedSchema(linkSchema), authenticate, caseReader, listLinksRoute),
    route('post', '/cases/:caseId/links', createdLinkSchema, authenticate, caseAuthor, createLinkRoute(sequelize, config)),
    route('delete', '/cases/:caseId/links/:linkId', linkSchema, authenticate, caseAuthor, revokeLinkRoute(sequelize)),
    route('get', '/links/:token', publicCaseSchema, publicLinkRoute),
    route('get', '/links/:token/report.pdf', null, publicLinkReportRoute),
    // the stored result as stored (gzip-compressed encoded text), not a JSON schema reply
    route('get', '/links/:token/runs/:runId/result', null, publicLinkRunResultRoute),
    route('get', '/cases/:caseId/bench-traces', pagedSchema(traceSummarySchema), authenticate, caseReader, listTracesRoute),
    route('post', '/cases/:caseId/bench-traces', traceSummarySchema, authenticate, caseAuthor, receiveTraceFile, uploadTraceRoute(sequelize)),
    route('get', '/cases/:caseId/bench-traces/:traceId', traceDetailSchema, authenticate, caseReader, traceRoute),
    // a CSV file, not JSON
    route('get', '/cases/:caseId/bench-traces/:traceId/download', null, authenticate, caseReader, traceDownloadRoute),
    route('delete', '/cases/:caseId/bench-traces/:traceId', null, authenticate, caseAuthor, deleteTraceRoute(sequelize)),
    route('get', '/admin/outbox', pagedSchema(outboxMailSchema), authenticate, requireSiteAdmin, outboxRoute),
    route('get', '/admin/mails', pagedSchema(sinkMailSchema), authenticate, requireSiteAdmin, sinkMailsRoute(config)),
  ];
  if (options.checkResponses) api.use(checkReplies);
  for (const { method, path, reply, handlers } of routes) {
    api[method](path, ...(options.checkResponses ? [declareReply(reply)] : []), ...handlers);
  }
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
