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
