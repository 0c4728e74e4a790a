import type { Sequelize } from 'sequelize';
import { AuditEvent } from './audit-event';
import { Invitation } from './invitation';
import { Lab } from './lab';
import { Membership } from './membership';
import { RevokedToken } from './revoked-token';
import { SinkMail } from './sink-mail';
import { User } from './user';

export { AuditEvent, Invitation, Lab, Membership, RevokedToken, SinkMail, User };
export { LAB_ROLES, type LabRole } from './roles';

/** Binds every model to `sequelize` and declares the associations. Call once per process. */
export function initModels(sequelize: Sequelize): void {
  for (const model of [User, Lab, Membership, Invitation, AuditEvent, RevokedToken, SinkMail]) model.initModel(sequelize);
  Membership.belongsTo(User, { foreignKey: 'userId', as: 'user' });
  Membership.belongsTo(Lab, { foreignKey: 'labId', as: 'lab' });
  User.hasMany(Membership, { foreignKey: 'userId', as: 'memberships' });
  Lab.hasMany(Membership, { foreignKey: 'labId', as: 'memberships' });
  Invitation.belongsTo(Lab, { foreignKey: 'labId', as: 'lab' });
}
