import type { Sequelize } from 'sequelize';
import { AuditEvent } from './audit-event';
import { Invitation } from './invitation';
import { Lab } from './lab';
import { Membership } from './membership';
import { RevokedToken } from './revoked-token';
import { SinkMail } from './sink-mail';
import { User } from './user';
import { BenchTrace } from './bench-trace';
import { CaseLink } from './case-link';
import { CaseRecord } from './case-record';
import { Comment } from './comment';
import { initLibraryModels } from './library';
import { OutboxMail } from './outbox-mail';
import { Recheck } from './recheck';
import { Revision } from './revision';
import { Run } from './run';
import { RunVerification } from './run-verification';

export { AuditEvent, Invitation, Lab, Membership, RevokedToken, SinkMail, User };
export { LAB_ROLES, type LabRole } from './roles';
export { BenchTrace, CaseLink, CaseRecord, Comment, OutboxMail, Recheck, Revision, Run, RunVerification };
export { VERIFICATION_STATES, type VerificationState } from './run-verification';
export type { TraceSeries } from './bench-trace';
export { RECHECK_STATES, type RecheckState } from './recheck-states';

/** Binds every model to `sequelize` and declares the associations. Call once per process. */
export function initModels(sequelize: Sequelize): void {
  for (const model of [User, Lab, Membership, Invitation, AuditEvent, RevokedToken, SinkMail]) model.initModel(sequelize);
  Membership.belongsTo(User, { foreignKey: 'userId', as: 'user' });
  Membership.belongsTo(Lab, { foreignKey: 'labId', as: 'lab' });
  User.hasMany(Membership, { foreignKey: 'userId', as: 'memberships' });
  Lab.hasMany(Membership, { foreignKey: 'labId', as: 'memberships' });
  Invitation.belongsTo(Lab, { foreignKey: 'labId', as: 'lab' });
  initLibraryModels(sequelize);
}
