import type { Sequelize } from 'sequelize';
import { BenchTrace } from './bench-trace';
import { CaseLink } from './case-link';
import { CaseRecord } from './case-record';
import { Comment } from './comment';
import { OutboxMail } from './outbox-mail';
import { Recheck } from './recheck';
import { Revision } from './revision';
import { Run } from './run';
import { RunVerification } from './run-verification';
import { User } from './user';

/** Binds the case-library models and declares their associations (after the foundation's models). */
export function initLibraryModels(sequelize: Sequelize): void {
  for (const model of [CaseRecord, Revision, Run, RunVerification, Recheck, Comment, CaseLink, BenchTrace, OutboxMail]) model.initModel(sequelize);
  CaseRecord.belongsTo(User, { foreignKey: 'authorId', as: 'author' });
  Revision.belongsTo(User, { foreignKey: 'authorId', as: 'author' });
  Run.belongsTo(User, { foreignKey: 'authorId', as: 'author' });
  Recheck.belongsTo(User, { foreignKey: 'reviewerId', as: 'reviewer' });
  Comment.belongsTo(User, { foreignKey: 'authorId', as: 'author' });
  BenchTrace.belongsTo(User, { foreignKey: 'authorId', as: 'author' });
  Run.hasOne(RunVerification, { foreignKey: 'runId', as: 'verification' });
  CaseLink.belongsTo(Revision, { foreignKey: 'revisionId', as: 'revision' });
}
