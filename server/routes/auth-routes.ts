import type { RequestHandler } from 'express';
import { z } from 'zod';
import type { Config } from '../config';
import { currentUser } from '../middleware/auth';
import { parseInput } from '../middleware/validate';
import { signIn, signOut } from '../services/auth-service';

const signInBody = z.object({
  email: z.string().trim().min(1).max(320),
  password: z.string().min(1).max(1024),
});

export function signInRoute(config: Config): RequestHandler {
  return async (req, res) => {
    const { email, password } = parseInput(signInBody, req.body);
    res.json(await signIn(email, password, config));
  };
}

export const signOutRoute: RequestHandler = async (req, res) => {
  const user = currentUser(req);
  await signOut({ sub: user.id, jti: user.tokenId, exp: user.tokenExp });
  res.status(204).end();
};
