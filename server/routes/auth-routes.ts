import type { RequestHandler } from 'express';
import { signInBodySchema } from '../../shared/api/auth';
import { AppError } from '../app-error';
import type { Config } from '../config';
import { currentUser } from '../middleware/auth';
import { parseInput } from '../middleware/validate';
import { normaliseEmail, signIn, signOut } from '../services/auth-service';
import type { SignInBackoff } from '../services/sign-in-backoff';

function waitText(ms: number): string {
  const seconds = Math.ceil(ms / 1000);
  return seconds < 90 ? `${seconds} seconds` : `${Math.ceil(seconds / 60)} minutes`;
}

/** Sign-in behind the per-account back-off (the per-address limit runs before this in the route table). */
export function signInRoute(config: Config, backoff: SignInBackoff): RequestHandler {
  return async (req, res) => {
    const { email, password } = parseInput(signInBodySchema, req.body);
    const account = normaliseEmail(email);
    const wait = backoff.waitMs(account);
    if (wait > 0) {
      res.setHeader('Retry-After', String(Math.ceil(wait / 1000)));
      throw new AppError('too_many_attempts', `Too many failed sign-ins for this account; try again in ${waitText(wait)}.`, 429);
    }
    const signedIn = await signIn(email, password, config).catch((err: unknown) => {
      if (err instanceof AppError && err.code === 'bad_credentials') backoff.recordFailure(account);
      throw err;
    });
    backoff.recordSuccess(account);
    res.setHeader('Cache-Control', 'no-store');
    res.json(signedIn);
  };
}

export const signOutRoute: RequestHandler = async (req, res) => {
  const user = currentUser(req);
  await signOut({ sub: user.id, jti: user.tokenId, exp: user.tokenExp });
  res.status(204).end();
};
