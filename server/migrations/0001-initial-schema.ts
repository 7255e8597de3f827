/**
 * The initial schema: people, labs and roles; projects, samples and images with frames; annotations, analyses,
 * reviews and comments; the audit log; and the session table used by connect-pg-simple.
 */
import { DataTypes, type QueryInterface } from 'sequelize'

const id = { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true, allowNull: false }
const timestamps = {
  created_at: { type: DataTypes.DATE, allowNull: false },
  updated_at: { type: DataTypes.DATE, allowNull: false },
}
const ref = (table: string, onDelete: 'CASCADE' | 'SET NULL' | 'RESTRICT', allowNull = false) => ({
  type: DataTypes.INTEGER,
  allowNull,
  references: { model: table, key: 'id' },
  onDelete,
  onUpdate: 'CASCADE',
})

export async function up({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.createTable('users', {
    id,
    email: { type: DataTypes.STRING(320), allowNull: false, unique: true },
    name: { type: DataTypes.STRING(200), allowNull: false },
    password_hash: { type: DataTypes.STRING(300), allowNull: true },
    active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
    failed_logins: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    locked_until: { type: DataTypes.DATE, allowNull: true },
    ...timestamps,
  })
  await qi.createTable('labs', {
    id,
    name: { type: DataTypes.STRING(200), allowNull: false },
    institution: { type: DataTypes.STRING(200), allowNull: false, defaultValue: '' },
    ...timestamps,
  })
  await qi.createTable('memberships', {
    id,
    lab_id: ref('labs', 'CASCADE'),
    user_id: ref('users', 'CASCADE'),
    role: { type: DataTypes.STRING(20), allowNull: false },
    active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
    ...timestamps,
  })
  await qi.addConstraint('memberships', { type: 'unique', fields: ['lab_id', 'user_id'], name: 'memberships_lab_user_unique' })
  await qi.addConstraint('memberships', {
    type: 'check',
    fields: ['role'],
    name: 'memberships_role_check',
    where: { role: ['admin', 'pi', 'microscopist', 'annotator', 'reviewer'] },
  })
  await qi.addIndex('memberships', ['user_id'])

  await qi.createTable('projects', {
    id,
    lab_id: ref('labs', 'CASCADE'),
    name: { type: DataTypes.STRING(200), allowNull: false },
    description: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
    created_by_id: ref('users', 'SET NULL', true),
    deleted_at: { type: DataTypes.DATE, allowNull: true },
    ...timestamps,
  })
  await qi.addIndex('projects', ['lab_id'])

  await qi.createTable('samples', {
    id,
    project_id: ref('projects', 'CASCADE'),
    name: { type: DataTypes.STRING(200), allowNull: false },
    material: { type: DataTypes.STRING(200), allowNull: false, defaultValue: '' },
    thickness_nm: { type: DataTypes.DOUBLE, allowNull: true },
    substrate: { type: DataTypes.STRING(200), allowNull: false, defaultValue: '' },
    anneal_temperature_c: { type: DataTypes.DOUBLE, allowNull: true },
    anneal_duration_min: { type: DataTypes.DOUBLE, allowNull: true },
    anneal_atmosphere: { type: DataTypes.STRING(100), allowNull: false, defaultValue: '' },
    anneal_field_mt: { type: DataTypes.DOUBLE, allowNull: true },
    notes: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
    ...timestamps,
  })
  await qi.addIndex('samples', ['project_id'])

  await qi.createTable('images', {
    id,
    project_id: ref('projects', 'CASCADE'),
    sample_id: ref('samples', 'SET NULL', true),
    uploaded_by_id: ref('users', 'SET NULL', true),
    name: { type: DataTypes.STRING(300), allowNull: false },
    technique: { type: DataTypes.STRING(30), allowNull: false },
    object_key: { type: DataTypes.STRING(500), allowNull: false, unique: true },
    sha256: { type: DataTypes.STRING(64), allowNull: false },
    byte_size: { type: DataTypes.BIGINT, allowNull: false },
    media_type: { type: DataTypes.STRING(100), allowNull: false },
    width: { type: DataTypes.INTEGER, allowNull: false },
    height: { type: DataTypes.INTEGER, allowNull: false },
    bit_depth: { type: DataTypes.INTEGER, allowNull: false },
    frame_count: { type: DataTypes.INTEGER, allowNull: false },
    pixel_size_nm: { type: DataTypes.DOUBLE, allowNull: true },
    pixel_size_source: { type: DataTypes.STRING(40), allowNull: true },
    notes: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
    acquired_at: { type: DataTypes.DATE, allowNull: true },
    deleted_at: { type: DataTypes.DATE, allowNull: true },
    ...timestamps,
  })
  await qi.addIndex('images', ['project_id', 'created_at'])
  await qi.addIndex('images', ['sample_id'])
  await qi.addIndex('images', ['project_id', 'sha256'])
  await qi.addIndex('images', ['technique'])

  await qi.createTable('frames', {
    id,
    image_id: ref('images', 'CASCADE'),
    index: { type: DataTypes.INTEGER, allowNull: false },
    field: { type: DataTypes.DOUBLE, allowNull: true },
    field_unit: { type: DataTypes.STRING(10), allowNull: true },
    temperature_k: { type: DataTypes.DOUBLE, allowNull: true },
    assignee_id: ref('users', 'SET NULL', true),
    annotation_status: { type: DataTypes.STRING(20), allowNull: false, defaultValue: 'new' },
    ...timestamps,
  })
  await qi.addConstraint('frames', { type: 'unique', fields: ['image_id', 'index'], name: 'frames_image_index_unique' })
  await qi.addIndex('frames', ['assignee_id', 'annotation_status'])

  await qi.createTable('annotations', {
    id,
    frame_id: ref('frames', 'CASCADE'),
    version: { type: DataTypes.INTEGER, allowNull: false },
    mask_key: { type: DataTypes.STRING(500), allowNull: false },
    mask_encoding: { type: DataTypes.STRING(40), allowNull: false },
    shapes: { type: DataTypes.JSONB, allowNull: false, defaultValue: [] },
    author_id: ref('users', 'SET NULL', true),
    ...timestamps,
  })
  await qi.addConstraint('annotations', { type: 'unique', fields: ['frame_id', 'version'], name: 'annotations_frame_version_unique' })

  await qi.createTable('analyses', {
    id,
    frame_id: ref('frames', 'CASCADE'),
    annotation_id: ref('annotations', 'SET NULL', true),
    recipe: { type: DataTypes.JSONB, allowNull: false },
    engine_version: { type: DataTypes.STRING(40), allowNull: false },
    results: { type: DataTypes.JSONB, allowNull: true },
    status: { type: DataTypes.STRING(30), allowNull: false, defaultValue: 'draft' },
    created_by_id: ref('users', 'SET NULL', true),
    approved_by_id: ref('users', 'SET NULL', true),
    approved_at: { type: DataTypes.DATE, allowNull: true },
    ...timestamps,
  })
  await qi.addIndex('analyses', ['frame_id'])
  await qi.addIndex('analyses', ['status'])

  await qi.createTable('reviews', {
    id,
    analysis_id: ref('analyses', 'CASCADE'),
    reviewer_id: ref('users', 'SET NULL', true),
    from_status: { type: DataTypes.STRING(30), allowNull: false },
    to_status: { type: DataTypes.STRING(30), allowNull: false },
    message: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
    ...timestamps,
  })
  await qi.addIndex('reviews', ['analysis_id'])

  await qi.createTable('comments', {
    id,
    analysis_id: ref('analyses', 'CASCADE'),
    author_id: ref('users', 'SET NULL', true),
    body: { type: DataTypes.TEXT, allowNull: false },
    x: { type: DataTypes.DOUBLE, allowNull: true },
    y: { type: DataTypes.DOUBLE, allowNull: true },
    resolved_at: { type: DataTypes.DATE, allowNull: true },
    ...timestamps,
  })
  await qi.addIndex('comments', ['analysis_id'])

  await qi.createTable('audit_events', {
    id,
    lab_id: ref('labs', 'SET NULL', true),
    actor_id: ref('users', 'SET NULL', true),
    action: { type: DataTypes.STRING(80), allowNull: false },
    entity_type: { type: DataTypes.STRING(40), allowNull: false },
    entity_id: { type: DataTypes.INTEGER, allowNull: true },
    before: { type: DataTypes.JSONB, allowNull: true },
    after: { type: DataTypes.JSONB, allowNull: true },
    created_at: { type: DataTypes.DATE, allowNull: false },
  })
  await qi.addIndex('audit_events', ['lab_id', 'created_at'])
  await qi.addIndex('audit_events', ['entity_type', 'entity_id'])

  // The session table in the shape connect-pg-simple documents (its table.sql).
  await qi.sequelize.query(`
    CREATE TABLE "session" (
      "sid" varchar NOT NULL COLLATE "default" PRIMARY KEY,
      "sess" json NOT NULL,
      "expire" timestamp(6) NOT NULL
    );
    CREATE INDEX "IDX_session_expire" ON "session" ("expire");`)
}

export async function down({ context: qi }: { context: QueryInterface }): Promise<void> {
  for (const table of ['session', 'audit_events', 'comments', 'reviews', 'analyses', 'annotations', 'frames', 'images', 'samples', 'projects', 'memberships', 'labs', 'users']) {
    await qi.dropTable(table)
  }
}
