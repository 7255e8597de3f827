/**
 * Lab collaboration: invitations to a lab, one-time account links (password reset and unlock after a lock-out),
 * personal API tokens and saved comparison views. Every secret is stored as its SHA-256 only, so a copy of the
 * database holds no usable link or token.
 */
import { DataTypes, type QueryInterface } from 'sequelize'

const id = { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true, allowNull: false }
const timestamps = {
  created_at: { type: DataTypes.DATE, allowNull: false },
  updated_at: { type: DataTypes.DATE, allowNull: false },
}
const ref = (table: string, onDelete: 'CASCADE' | 'SET NULL', allowNull = false) => ({
  type: DataTypes.INTEGER,
  allowNull,
  references: { model: table, key: 'id' },
  onDelete,
  onUpdate: 'CASCADE',
})
/** Hex SHA-256 of the secret; unique, so a lookup by hash finds at most one row. */
const tokenHash = { type: DataTypes.STRING(64), allowNull: false, unique: true }

export async function up({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.createTable('invitations', {
    id,
    lab_id: ref('labs', 'CASCADE'),
    email: { type: DataTypes.STRING(320), allowNull: false },
    role: { type: DataTypes.STRING(20), allowNull: false },
    token_hash: tokenHash,
    invited_by_id: ref('users', 'SET NULL', true),
    expires_at: { type: DataTypes.DATE, allowNull: false },
    used_at: { type: DataTypes.DATE, allowNull: true },
    used_by_id: ref('users', 'SET NULL', true),
    revoked_at: { type: DataTypes.DATE, allowNull: true },
    ...timestamps,
  })
  await qi.addConstraint('invitations', {
    type: 'check',
    fields: ['role'],
    name: 'invitations_role_check',
    where: { role: ['admin', 'pi', 'microscopist', 'annotator', 'reviewer'] },
  })
  await qi.addIndex('invitations', ['lab_id', 'email'])

  await qi.createTable('password_resets', {
    id,
    user_id: ref('users', 'CASCADE'),
    purpose: { type: DataTypes.STRING(20), allowNull: false },
    token_hash: tokenHash,
    expires_at: { type: DataTypes.DATE, allowNull: false },
    used_at: { type: DataTypes.DATE, allowNull: true },
    ...timestamps,
  })
  await qi.addConstraint('password_resets', { type: 'check', fields: ['purpose'], name: 'password_resets_purpose_check', where: { purpose: ['password-reset', 'unlock'] } })
  await qi.addIndex('password_resets', ['user_id', 'purpose', 'created_at'])

  await qi.createTable('api_tokens', {
    id,
    user_id: ref('users', 'CASCADE'),
    name: { type: DataTypes.STRING(100), allowNull: false },
    token_hash: tokenHash,
    /** The first characters of the token, shown in lists so people can tell their tokens apart. */
    display_prefix: { type: DataTypes.STRING(16), allowNull: false },
    scope: { type: DataTypes.STRING(20), allowNull: false, defaultValue: 'read' },
    expires_at: { type: DataTypes.DATE, allowNull: true },
    last_used_at: { type: DataTypes.DATE, allowNull: true },
    revoked_at: { type: DataTypes.DATE, allowNull: true },
    ...timestamps,
  })
  await qi.addIndex('api_tokens', ['user_id'])

  await qi.createTable('saved_comparisons', {
    id,
    lab_id: ref('labs', 'CASCADE'),
    name: { type: DataTypes.STRING(200), allowNull: false },
    query: { type: DataTypes.JSONB, allowNull: false },
    created_by_id: ref('users', 'SET NULL', true),
    ...timestamps,
  })
  await qi.addIndex('saved_comparisons', ['lab_id', 'created_at'])
  // The review queue and the exports look analyses up by status within frames.
  await qi.addIndex('analyses', ['frame_id', 'status'])
}

export async function down({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.removeIndex('analyses', ['frame_id', 'status'])
  for (const table of ['saved_comparisons', 'api_tokens', 'password_resets', 'invitations']) await qi.dropTable(table)
}
