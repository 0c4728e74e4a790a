/**
 * Users, labs, memberships, invitations, audit events, revoked tokens and the local mail sink's table.
 */
import { DataTypes } from 'sequelize';
import type { Migration } from '../migrator';

const id = { type: DataTypes.UUID, primaryKey: true, allowNull: false, defaultValue: DataTypes.UUIDV4 };
const stamps = {
  created_at: { type: DataTypes.DATE, allowNull: false },
  updated_at: { type: DataTypes.DATE, allowNull: false },
};
const ref = (table: string, onDelete: 'CASCADE' | 'SET NULL', allowNull = false) => ({
  type: DataTypes.UUID,
  allowNull,
  references: { model: table, key: 'id' },
  onDelete,
});
const roleCheck = (table: string) =>
  `ALTER TABLE ${table} ADD CONSTRAINT ${table}_role_check CHECK (role IN ('owner', 'analyst', 'reviewer', 'viewer'))`;

export const up: Migration = async ({ context: { queryInterface: qi, transaction } }) => {
  await qi.createTable(
    'users',
    {
      id,
      email: { type: DataTypes.STRING(320), allowNull: false, unique: true },
      name: { type: DataTypes.STRING(200), allowNull: false },
      password_hash: { type: DataTypes.TEXT, allowNull: false },
      is_site_admin: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
      ...stamps,
    },
    { transaction },
  );
  await qi.sequelize.query('ALTER TABLE users ADD CONSTRAINT users_email_lower CHECK (email = lower(email))', { transaction });

  await qi.createTable('labs', { id, name: { type: DataTypes.STRING(200), allowNull: false, unique: true }, ...stamps }, { transaction });

  await qi.createTable(
    'memberships',
    { id, lab_id: ref('labs', 'CASCADE'), user_id: ref('users', 'CASCADE'), role: { type: DataTypes.STRING(16), allowNull: false }, ...stamps },
    { transaction },
  );
  await qi.addIndex('memberships', ['lab_id', 'user_id'], { unique: true, transaction });
  await qi.addIndex('memberships', ['user_id'], { transaction });
  await qi.sequelize.query(roleCheck('memberships'), { transaction });

  await qi.createTable(
    'invitations',
    {
      id,
      lab_id: ref('labs', 'CASCADE'),
      email: { type: DataTypes.STRING(320), allowNull: false },
      role: { type: DataTypes.STRING(16), allowNull: false },
      token_hash: { type: DataTypes.STRING(64), allowNull: false, unique: true },
      expires_at: { type: DataTypes.DATE, allowNull: false },
      accepted_at: { type: DataTypes.DATE, allowNull: true },
      invited_by_id: ref('users', 'SET NULL', true),
      ...stamps,
    },
    { transaction },
  );
  await qi.addIndex('invitations', ['lab_id', 'email'], { transaction });
  await qi.sequelize.query(roleCheck('invitations'), { transaction });

  await qi.createTable(
    'audit_events',
    {
      id: { type: DataTypes.BIGINT, autoIncrement: true, primaryKey: true },
      actor_id: ref('users', 'SET NULL', true),
      lab_id: ref('labs', 'SET NULL', true),
      action: { type: DataTypes.STRING(64), allowNull: false },
      details: { type: DataTypes.JSONB, allowNull: false, defaultValue: {} },
      created_at: { type: DataTypes.DATE, allowNull: false },
    },
    { transaction },
  );
  await qi.addIndex('audit_events', ['lab_id', 'created_at'], { transaction });

  await qi.createTable(
    'revoked_tokens',
    {
      jti: { type: DataTypes.UUID, primaryKey: true },
      user_id: ref('users', 'CASCADE'),
      expires_at: { type: DataTypes.DATE, allowNull: false },
      created_at: { type: DataTypes.DATE, allowNull: false },
    },
    { transaction },
  );
  await qi.addIndex('revoked_tokens', ['expires_at'], { transaction });

  await qi.createTable(
    'sink_mails',
    {
      id: { type: DataTypes.BIGINT, autoIncrement: true, primaryKey: true },
      mail_from: { type: DataTypes.TEXT, allowNull: false },
      rcpt_to: { type: DataTypes.ARRAY(DataTypes.TEXT), allowNull: false },
      subject: { type: DataTypes.TEXT, allowNull: false },
      text_body: { type: DataTypes.TEXT, allowNull: false },
      raw: { type: DataTypes.TEXT, allowNull: false },
      received_at: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
    },
    { transaction },
  );
};

export const down: Migration = async ({ context: { queryInterface: qi, transaction } }) => {
  for (const table of ['sink_mails', 'revoked_tokens', 'audit_events', 'invitations', 'memberships', 'labs', 'users']) {
    await qi.dropTable(table, { transaction });
  }
};
