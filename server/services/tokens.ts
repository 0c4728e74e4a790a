/** One-time bearer secrets (invitation and case-link tokens): 32 random bytes shown once, only their SHA-256 stored. */
import { createHash, randomBytes } from 'node:crypto';

export function newToken(): string {
  return randomBytes(32).toString('base64url');
}

export function hashToken(token: string): string {
  return createHash('sha256').update(token).digest('hex');
}
