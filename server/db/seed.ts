/**
 * The demo: one invented lab and one account per role, with well-known passwords. Local use only (the accounts are
 * listed in README and docs/database.md). Idempotent: existing rows are kept as they are.
 */
import type { Sequelize } from 'sequelize';
import { hashPassword } from '../services/passwords';
import { Lab, Membership, User, type LabRole } from './models';
import { seedLibrary } from './seed-library';

export const DEMO_LAB_NAME = 'Brightwater Shaker Lab';

/** The demo owner is also the local site administrator, so the mail sink page works without SQL. */
export const DEMO_ACCOUNTS: ReadonlyArray<{ email: string; name: string; role: LabRole; password: string; siteAdmin?: boolean }> = [
  { email: 'owner@quiverpoint.test', name: 'Odile Owner', role: 'owner', password: 'quiver-owner', siteAdmin: true },
  { email: 'analyst@quiverpoint.test', name: 'Ada Analyst', role: 'analyst', password: 'quiver-analyst' },
  { email: 'reviewer@quiverpoint.test', name: 'Rui Reviewer', role: 'reviewer', password: 'quiver-reviewer' },
  { email: 'viewer@quiverpoint.test', name: 'Vera Viewer', role: 'viewer', password: 'quiver-viewer' },
];

/** True for names and addresses that only this machine can reach. */
export function isLoopback(host: string): boolean {
  const h = host.toLowerCase().replace(/^\[|\]$/g, '');
  return h === 'localhost' || h.endsWith('.localhost') || h === '::1' || /^127(\.\d{1,3}){3}$/.test(h) || /^::ffff:127(\.\d{1,3}){3}$/.test(h);
}

/**
 * The demo passwords are public, so the demo is seeded only where nobody else can sign in with them: the app must
 * listen on loopback (HOST) and its public URL (QP_PUBLIC_URL) must name this machine, unless QP_SEED_FORCE=1.
 */
export function assertDemoSeedAllowed(where: { host: string; publicUrl: string }, force: boolean): void {
  if (force) return;
  const problems: string[] = [];
  if (!isLoopback(where.host)) problems.push(`the app listens on ${where.host} (HOST), beyond this machine`);
  let urlHost = '';
  try {
    urlHost = new URL(where.publicUrl).hostname;
  } catch {
    // an unparsable URL is not a local one
  }
  if (!isLoopback(urlHost)) problems.push(`the public URL ${where.publicUrl} (QP_PUBLIC_URL) is not a local address`);
  if (problems.length === 0) return;
  throw new Error(
    `refusing to seed the demo accounts, whose passwords are public: ${problems.join(' and ')}. ` +
      'Seed only a local copy, or set QP_SEED_FORCE=1 if you really mean it.',
  );
}

export async function seedDemo(sequelize: Sequelize): Promise<{ labId: string; created: number }> {
  let created = 0;
  const [lab, labCreated] = await Lab.findOrCreate({ where: { name: DEMO_LAB_NAME }, defaults: { name: DEMO_LAB_NAME } });
  if (labCreated) created++;
  for (const account of DEMO_ACCOUNTS) {
    await sequelize.transaction(async (transaction) => {
      let user = await User.findOne({ where: { email: account.email }, transaction });
      if (!user) {
        user = await User.create(
          { email: account.email, name: account.name, passwordHash: await hashPassword(account.password), isSiteAdmin: account.siteAdmin ?? false },
          { transaction },
        );
        created++;
      }
      const [, membershipCreated] = await Membership.findOrCreate({
        where: { labId: lab.id, userId: user.id },
        defaults: { labId: lab.id, userId: user.id, role: account.role },
        transaction,
      });
      if (membershipCreated) created++;
    });
  }
  created += await seedLibrary(sequelize, lab.id);
  return { labId: lab.id, created };
}
