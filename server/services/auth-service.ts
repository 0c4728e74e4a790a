/**
 * Sign-in, access tokens and sign-out. Tokens are short-lived HS256 JWTs with a unique id (`jti`); sign-out
 * records that id so the token stops working before it expires.
 */
import { randomUUID } from 'node:crypto';
import jwt from 'jsonwebtoken';
import { Op, QueryTypes } from 'sequelize';
import type { PublicUser, SignedIn } from '../../shared/api/auth';
import { AppError } from '../app-error';
import type { Config } from '../config';
import { AuditEvent, RevokedToken, User, type LabRole } from '../db/models';
import { hashPassword, verifyPassword } from './passwords';

/** Claims we put in (and require from) an access token. */
export interface AccessClaims {
  sub: string;
  jti: string;
  exp: number;
}

export type { PublicUser };

export function publicUser(user: User): PublicUser {
  return { id: user.id, email: user.email, name: user.name, isSiteAdmin: user.isSiteAdmin };
}

export function normaliseEmail(email: string): string {
  return email.trim().toLowerCase();
}

let dummyHash: Promise<string> | undefined;

export function issueToken(user: User, config: Pick<Config, 'jwtSecret' | 'jwtTtlSeconds'>): SignedIn {
  const token = jwt.sign({}, config.jwtSecret, {
    algorithm: 'HS256',
    subject: user.id,
    jwtid: randomUUID(),
    expiresIn: config.jwtTtlSeconds,
  });
  const expiresAt = new Date(Date.now() + config.jwtTtlSeconds * 1000).toISOString();
  return { token, tokenType: 'Bearer', expiresAt, user: publicUser(user) };
}

export async function signIn(email: string, password: string, config: Config): Promise<SignedIn> {
  const user = await User.findOne({ where: { email: normaliseEmail(email) } });
  // Verify against a throwaway hash when the user is unknown so both failures take the same time.
  dummyHash ??= hashPassword(randomUUID());
  const ok = await verifyPassword(user?.passwordHash ?? (await dummyHash), password);
  if (!user || !ok) throw new AppError('bad_credentials', 'The email or password is incorrect.', 401);
  await AuditEvent.create({ actorId: user.id, labId: null, action: 'auth.signed_in', details: {} });
  return issueToken(user, config);
}

export async function signOut(claims: AccessClaims): Promise<void> {
  await RevokedToken.findOrCreate({
    where: { jti: claims.jti },
    defaults: { jti: claims.jti, userId: claims.sub, expiresAt: new Date(claims.exp * 1000) },
  });
  await RevokedToken.destroy({ where: { expiresAt: { [Op.lt]: new Date() } } });
  await AuditEvent.create({ actorId: claims.sub, labId: null, action: 'auth.signed_out', details: {} });
}

export interface TokenHolder {
  user: PublicUser;
  /** the user's role in each of their labs, by lab id */
  labRoles: Record<string, LabRole>;
  /** each of those labs' library version (migration 0004), the key of the case-list cache */
  libraryVersions: Record<string, number>;
  revoked: boolean;
}

/**
 * The account behind an access token, its lab roles and whether the token was signed out, in one query (every
 * authenticated request asks); null when the account no longer exists.
 */
export async function tokenHolder(sub: string, jti: string): Promise<TokenHolder | null> {
  const sequelize = User.sequelize;
  if (!sequelize) throw new Error('models are not bound to a database');
  const [row] = await sequelize.query<{ id: string; email: string; name: string; is_site_admin: boolean; lab_roles: Record<string, LabRole>; library_versions: Record<string, number>; revoked: boolean }>(
    `SELECT u.id, u.email, u.name, u.is_site_admin,
            EXISTS (SELECT 1 FROM revoked_tokens WHERE jti = :jti) AS revoked,
            COALESCE((SELECT json_object_agg(m.lab_id, m.role) FROM memberships m WHERE m.user_id = u.id), '{}') AS lab_roles,
            COALESCE((SELECT json_object_agg(m.lab_id, l.library_version) FROM memberships m JOIN labs l ON l.id = m.lab_id
                       WHERE m.user_id = u.id), '{}') AS library_versions
       FROM users u
      WHERE u.id = :sub`,
    { replacements: { sub, jti }, type: QueryTypes.SELECT },
  );
  if (!row) return null;
  return { user: { id: row.id, email: row.email, name: row.name, isSiteAdmin: row.is_site_admin }, labRoles: row.lab_roles, libraryVersions: row.library_versions, revoked: row.revoked };
}

export async function isRevoked(jti: string): Promise<boolean> {
  return (await RevokedToken.count({ where: { jti } })) > 0;
}
