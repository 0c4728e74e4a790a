/**
 * Bearer-token authentication with passport-jwt. Each app gets its own Passport instance (no global state), and
 * failures become our JSON 401s instead of passport's plain-text replies.
 */
import { createSecretKey } from 'node:crypto';
import type { RequestHandler } from 'express';
import { Passport } from 'passport';
import { ExtractJwt, Strategy as JwtStrategy } from 'passport-jwt';
import { z } from 'zod';
import { ERROR_STATUS, isErrorCode, type CodeWithStatus } from '../../shared/api/errors';
import { AppError } from '../app-error';
import type { LabRole } from '../db/models';
import { tokenHolder, type PublicUser } from '../services/auth-service';

declare global {
  namespace Express {
    interface User extends PublicUser {
      /** the user's role in each of their labs, by lab id, read with the token (requireLabRole, requireCaseRole) */
      labRoles: Record<string, LabRole>;
      /** each of those labs' library version, read in the same query (the case-list cache's key) */
      libraryVersions: Record<string, number>;
      /** the access token's id and expiry, for sign-out */
      tokenId: string;
      tokenExp: number;
    }
  }
}

/** The claims we sign; ids are checked here, as the database refuses a non-UUID with an error, not a miss. */
const claimsSchema = z.object({ sub: z.guid(), jti: z.guid(), exp: z.number() });

interface Failure {
  code: CodeWithStatus<401>;
  message: string;
}

function isUnauthorized(code: unknown): code is CodeWithStatus<401> {
  return isErrorCode(code) && ERROR_STATUS[code] === 401;
}

function failureFrom(info: unknown): Failure {
  if (typeof info === 'object' && info !== null) {
    const { code, message, name } = info as { code?: unknown; message?: unknown; name?: unknown };
    if (isUnauthorized(code) && typeof message === 'string') return { code, message };
    if (name === 'TokenExpiredError') return { code: 'token_expired', message: 'Your session has expired; sign in again.' };
    if (name === 'JsonWebTokenError' || name === 'NotBeforeError') return { code: 'invalid_token', message: 'The access token is not valid.' };
    if (message === 'No auth token') return { code: 'unauthenticated', message: 'Sign in first: this needs an access token (Authorization: Bearer ...).' };
  }
  return { code: 'invalid_token', message: 'The access token is not valid.' };
}

export function createAuthenticator(jwtSecret: string): RequestHandler {
  // Given a string, jsonwebtoken derives the key on every verify, after first failing to parse it as a public key
  // (an exception each time: the largest CPU cost of an authenticated request). A KeyObject skips both; the
  // provider hands it over because passport-jwt's types predate KeyObject.
  const key = createSecretKey(Buffer.from(jwtSecret));
  const passport = new Passport();
  passport.use(
    new JwtStrategy(
      {
        jwtFromRequest: ExtractJwt.fromAuthHeaderAsBearerToken(),
        secretOrKeyProvider: (_req, _rawToken, done) => done(null, key as unknown as Buffer),
        algorithms: ['HS256'],
      },
      (payload: unknown, done: (err: unknown, user?: Express.User | false, info?: Failure) => void) => {
        const claims = claimsSchema.safeParse(payload);
        if (!claims.success) {
          done(null, false, { code: 'invalid_token', message: 'The access token is not valid.' });
          return;
        }
        const { sub, jti, exp } = claims.data;
        (async () => {
          const holder = await tokenHolder(sub, jti);
          if (holder?.revoked) return done(null, false, { code: 'token_revoked', message: 'This session was signed out; sign in again.' });
          if (!holder) return done(null, false, { code: 'invalid_token', message: 'The account for this token no longer exists.' });
          return done(null, { ...holder.user, labRoles: holder.labRoles, libraryVersions: holder.libraryVersions, tokenId: jti, tokenExp: exp });
        })().catch((err: unknown) => done(err));
      },
    ),
  );
  return (req, res, next) => {
    passport.authenticate('jwt', { session: false }, (err: unknown, user: Express.User | false, info: unknown) => {
      if (err) return next(err);
      if (!user) {
        const { code, message } = failureFrom(info);
        return next(new AppError(code, message, 401));
      }
      req.user = user;
      return next();
    })(req, res, next);
  };
}

/** The signed-in user; only call behind the authenticator. */
export function currentUser(req: Express.Request): Express.User {
  if (!req.user) throw new AppError('unauthenticated', 'Sign in first.', 401);
  return req.user;
}
