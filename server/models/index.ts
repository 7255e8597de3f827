/**
 * Sequelize model definitions (models only: the schema itself is made by the migrations in server/migrations/).
 * `defineModels` binds every model to one connection and declares the associations.
 */
import { DataTypes, Model, type CreationOptional, type ForeignKey, type InferAttributes, type InferCreationAttributes, type Sequelize, type Transaction } from 'sequelize'
import type { LabRole } from '../../shared/auth/permissions'
import type { AnalysisStatus, Technique } from '../../shared/types/lab'

export class User extends Model<InferAttributes<User>, InferCreationAttributes<User>> {
  declare id: CreationOptional<number>
  declare email: string
  declare name: string
  declare passwordHash: string | null
  declare active: CreationOptional<boolean>
  declare failedLogins: CreationOptional<number>
  declare lockedUntil: Date | null
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>
}

export class Lab extends Model<InferAttributes<Lab>, InferCreationAttributes<Lab>> {
  declare id: CreationOptional<number>
  declare name: string
  declare institution: string
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>
}

export class Membership extends Model<InferAttributes<Membership>, InferCreationAttributes<Membership>> {
  declare id: CreationOptional<number>
  declare labId: ForeignKey<Lab['id']>
  declare userId: ForeignKey<User['id']>
  declare role: LabRole
  declare active: CreationOptional<boolean>
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>
}

export class Project extends Model<InferAttributes<Project>, InferCreationAttributes<Project>> {
  declare id: CreationOptional<number>
  declare labId: ForeignKey<Lab['id']>
  declare name: string
  declare description: CreationOptional<string>
  declare createdById: ForeignKey<User['id']> | null
  declare deletedAt: Date | null
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>
}

export class Sample extends Model<InferAttributes<Sample>, InferCreationAttributes<Sample>> {
  declare id: CreationOptional<number>
  declare projectId: ForeignKey<Project['id']>
  declare name: string
  declare material: CreationOptional<string>
  declare thicknessNm: number | null
  declare substrate: CreationOptional<string>
  declare annealTemperatureC: number | null
  declare annealDurationMin: number | null
  declare annealAtmosphere: CreationOptional<string>
  declare annealFieldMT: number | null
  declare notes: CreationOptional<string>
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>
}

export class Image extends Model<InferAttributes<Image>, InferCreationAttributes<Image>> {
  declare id: CreationOptional<number>
  declare projectId: ForeignKey<Project['id']>
  declare sampleId: ForeignKey<Sample['id']> | null
  declare uploadedById: ForeignKey<User['id']> | null
  declare name: string
  declare technique: Technique
  declare objectKey: string
  declare sha256: string
  declare byteSize: number
  declare mediaType: string
  declare width: number
  declare height: number
  declare bitDepth: number
  declare frameCount: number
  /** The frame shown for the image in lists and reports (the most wall detail at ingest; 0 before that was kept). */
  declare coverFrameIndex: CreationOptional<number>
  declare pixelSizeNm: number | null
  declare pixelSizeSource: string | null
  declare notes: CreationOptional<string>
  declare acquiredAt: Date | null
  declare deletedAt: Date | null
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>
}

export class Frame extends Model<InferAttributes<Frame>, InferCreationAttributes<Frame>> {
  declare id: CreationOptional<number>
  declare imageId: ForeignKey<Image['id']>
  declare index: number
  declare field: number | null
  declare fieldUnit: string | null
  declare temperatureK: number | null
  /** Motion series: amplitude of the pulse before this frame (in `fieldUnit`), its duration in s, or the time in s. */
  declare pulseField: CreationOptional<number | null>
  declare pulseDurationS: CreationOptional<number | null>
  declare timeS: CreationOptional<number | null>
  declare assigneeId: ForeignKey<User['id']> | null
  declare annotationStatus: CreationOptional<string>
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>
}

export class Annotation extends Model<InferAttributes<Annotation>, InferCreationAttributes<Annotation>> {
  declare id: CreationOptional<number>
  declare frameId: ForeignKey<Frame['id']>
  /** Null for a conflict copy (a save based on an out-of-date version, kept so nothing is lost). */
  declare version: number | null
  declare state: CreationOptional<'saved' | 'conflict'>
  declare basedOnVersion: number | null
  declare maskKey: string
  declare maskEncoding: string
  declare shapes: CreationOptional<unknown[]>
  declare authorId: ForeignKey<User['id']> | null
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>
}

export class Analysis extends Model<InferAttributes<Analysis>, InferCreationAttributes<Analysis>> {
  declare id: CreationOptional<number>
  declare frameId: ForeignKey<Frame['id']>
  declare annotationId: ForeignKey<Annotation['id']> | null
  declare recipe: Record<string, unknown>
  declare engineVersion: string
  declare results: Record<string, unknown> | null
  declare status: CreationOptional<AnalysisStatus>
  declare createdById: ForeignKey<User['id']> | null
  declare approvedById: ForeignKey<User['id']> | null
  declare approvedAt: Date | null
  declare error: string | null
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>
}

export class Review extends Model<InferAttributes<Review>, InferCreationAttributes<Review>> {
  declare id: CreationOptional<number>
  declare analysisId: ForeignKey<Analysis['id']>
  declare reviewerId: ForeignKey<User['id']> | null
  declare fromStatus: AnalysisStatus
  declare toStatus: AnalysisStatus
  declare message: CreationOptional<string>
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>
}

export class Comment extends Model<InferAttributes<Comment>, InferCreationAttributes<Comment>> {
  declare id: CreationOptional<number>
  declare analysisId: ForeignKey<Analysis['id']>
  declare authorId: ForeignKey<User['id']> | null
  declare body: string
  declare x: number | null
  declare y: number | null
  declare resolvedAt: Date | null
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>
}

export class AuditEvent extends Model<InferAttributes<AuditEvent>, InferCreationAttributes<AuditEvent>> {
  declare id: CreationOptional<number>
  declare labId: ForeignKey<Lab['id']> | null
  declare actorId: ForeignKey<User['id']> | null
  declare action: string
  declare entityType: string
  declare entityId: number | null
  declare before: Record<string, unknown> | null
  declare after: Record<string, unknown> | null
  declare createdAt: CreationOptional<Date>
}

export type StackRunStatus = 'queued' | 'running' | 'done' | 'done-with-errors' | 'failed'

export class StackRun extends Model<InferAttributes<StackRun>, InferCreationAttributes<StackRun>> {
  declare id: CreationOptional<number>
  declare imageId: ForeignKey<Image['id']>
  declare recipe: Record<string, unknown>
  declare engineVersion: string
  declare status: CreationOptional<StackRunStatus>
  declare framesTotal: number
  declare framesDone: CreationOptional<number>
  declare threshold: number | null
  declare summary: Record<string, unknown> | null
  declare error: string | null
  declare attempts: CreationOptional<number>
  declare worker: string | null
  declare heartbeatAt: Date | null
  declare startedAt: Date | null
  declare finishedAt: Date | null
  declare createdById: ForeignKey<User['id']> | null
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>
}

export class StackFrameResult extends Model<InferAttributes<StackFrameResult>, InferCreationAttributes<StackFrameResult>> {
  declare id: CreationOptional<number>
  declare runId: ForeignKey<StackRun['id']>
  declare frameIndex: number
  declare measurements: Record<string, unknown> | null
  declare maskKey: string | null
  declare error: string | null
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>
}

export class Invitation extends Model<InferAttributes<Invitation>, InferCreationAttributes<Invitation>> {
  declare id: CreationOptional<number>
  declare labId: ForeignKey<Lab['id']>
  /** Lower-case, trimmed. */
  declare email: string
  declare role: LabRole
  /** Hex SHA-256 of the token in the e-mailed link (the token itself is never stored). */
  declare tokenHash: string
  declare invitedById: ForeignKey<User['id']> | null
  declare expiresAt: Date
  declare usedAt: Date | null
  declare usedById: ForeignKey<User['id']> | null
  declare revokedAt: Date | null
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>
}

export type AccountLinkPurpose = 'password-reset' | 'unlock'

/** A one-time e-mailed link for an account: a password reset, or lifting a lock-out. */
export class PasswordReset extends Model<InferAttributes<PasswordReset>, InferCreationAttributes<PasswordReset>> {
  declare id: CreationOptional<number>
  declare userId: ForeignKey<User['id']>
  declare purpose: AccountLinkPurpose
  declare tokenHash: string
  declare expiresAt: Date
  declare usedAt: Date | null
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>
}

export class ApiToken extends Model<InferAttributes<ApiToken>, InferCreationAttributes<ApiToken>> {
  declare id: CreationOptional<number>
  declare userId: ForeignKey<User['id']>
  declare name: string
  declare tokenHash: string
  declare displayPrefix: string
  declare scope: CreationOptional<'read'>
  declare expiresAt: Date | null
  declare lastUsedAt: Date | null
  declare revokedAt: Date | null
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>
}

export class SavedComparison extends Model<InferAttributes<SavedComparison>, InferCreationAttributes<SavedComparison>> {
  declare id: CreationOptional<number>
  declare labId: ForeignKey<Lab['id']>
  declare name: string
  declare query: Record<string, unknown>
  declare createdById: ForeignKey<User['id']> | null
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>
}

/** A lab's own material constants for the theory checks (SI units, signed K), with where they come from. */
export class LabMaterial extends Model<InferAttributes<LabMaterial>, InferCreationAttributes<LabMaterial>> {
  declare id: CreationOptional<number>
  declare labId: ForeignKey<Lab['id']>
  declare name: string
  declare msAPerM: number
  declare aJPerM: number
  declare kJPerM3: number
  declare tcK: number | null
  declare source: CreationOptional<string>
  declare createdAt: CreationOptional<Date>
  declare updatedAt: CreationOptional<Date>
}

const id = { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true }
const timestamps = { createdAt: DataTypes.DATE, updatedAt: DataTypes.DATE }

export interface Models {
  User: typeof User
  Lab: typeof Lab
  Membership: typeof Membership
  Project: typeof Project
  Sample: typeof Sample
  Image: typeof Image
  Frame: typeof Frame
  Annotation: typeof Annotation
  Analysis: typeof Analysis
  Review: typeof Review
  Comment: typeof Comment
  AuditEvent: typeof AuditEvent
  StackRun: typeof StackRun
  StackFrameResult: typeof StackFrameResult
  Invitation: typeof Invitation
  PasswordReset: typeof PasswordReset
  ApiToken: typeof ApiToken
  SavedComparison: typeof SavedComparison
  LabMaterial: typeof LabMaterial
}

/** Told whenever a user, lab or membership row is written through the models (caches of who may do what listen). */
const identityListeners = new Set<() => void>()

export function onIdentityRowsWritten(listener: () => void): void {
  identityListeners.add(listener)
}

type WriteOptions = { transaction?: Transaction | null } | undefined

function identityRowsWritten(options: WriteOptions): void {
  const notify = () => identityListeners.forEach((listener) => listener())
  notify()
  // Inside a transaction the change shows only at commit: a read made in between must not outlive it.
  options?.transaction?.afterCommit(notify)
}

/** After-write hooks of the identity models (instance and bulk writes alike). */
const IDENTITY_HOOKS = {
  afterCreate: (_row: unknown, options: WriteOptions) => identityRowsWritten(options),
  afterUpdate: (_row: unknown, options: WriteOptions) => identityRowsWritten(options),
  afterDestroy: (_row: unknown, options: WriteOptions) => identityRowsWritten(options),
  afterUpsert: (_result: unknown, options: WriteOptions) => identityRowsWritten(options),
  afterBulkCreate: (_rows: unknown, options: WriteOptions) => identityRowsWritten(options),
  afterBulkUpdate: (options: WriteOptions) => identityRowsWritten(options),
  afterBulkDestroy: (options: WriteOptions) => identityRowsWritten(options),
}

/**
 * Bind every model to `sequelize` and declare associations. `Model.init` resets a class's associations, so they are
 * declared again on every call (tests bind a second connection).
 */
export function defineModels(sequelize: Sequelize): Models {
  const base = (tableName: string) => ({ sequelize, tableName, underscored: true })
  User.init(
    {
      id,
      email: { type: DataTypes.STRING(320), allowNull: false, unique: true },
      name: { type: DataTypes.STRING(200), allowNull: false },
      passwordHash: { type: DataTypes.STRING(300), allowNull: true },
      active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
      failedLogins: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      lockedUntil: { type: DataTypes.DATE, allowNull: true },
      ...timestamps,
    },
    { ...base('users'), hooks: IDENTITY_HOOKS },
  )
  Lab.init({ id, name: { type: DataTypes.STRING(200), allowNull: false }, institution: { type: DataTypes.STRING(200), allowNull: false, defaultValue: '' }, ...timestamps }, { ...base('labs'), hooks: IDENTITY_HOOKS })
  Membership.init(
    {
      id,
      role: { type: DataTypes.STRING(20), allowNull: false },
      active: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: true },
      ...timestamps,
    },
    { ...base('memberships'), hooks: IDENTITY_HOOKS },
  )
  Project.init(
    {
      id,
      name: { type: DataTypes.STRING(200), allowNull: false },
      description: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      createdById: { type: DataTypes.INTEGER, allowNull: true },
      deletedAt: { type: DataTypes.DATE, allowNull: true },
      ...timestamps,
    },
    base('projects'),
  )
  Sample.init(
    {
      id,
      name: { type: DataTypes.STRING(200), allowNull: false },
      material: { type: DataTypes.STRING(200), allowNull: false, defaultValue: '' },
      thicknessNm: { type: DataTypes.DOUBLE, allowNull: true },
      substrate: { type: DataTypes.STRING(200), allowNull: false, defaultValue: '' },
      annealTemperatureC: { type: DataTypes.DOUBLE, allowNull: true },
      annealDurationMin: { type: DataTypes.DOUBLE, allowNull: true },
      annealAtmosphere: { type: DataTypes.STRING(100), allowNull: false, defaultValue: '' },
      annealFieldMT: { type: DataTypes.DOUBLE, allowNull: true, field: 'anneal_field_mt' },
      notes: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      ...timestamps,
    },
    base('samples'),
  )
  Image.init(
    {
      id,
      sampleId: { type: DataTypes.INTEGER, allowNull: true },
      uploadedById: { type: DataTypes.INTEGER, allowNull: true },
      name: { type: DataTypes.STRING(300), allowNull: false },
      technique: { type: DataTypes.STRING(30), allowNull: false },
      objectKey: { type: DataTypes.STRING(500), allowNull: false },
      sha256: { type: DataTypes.STRING(64), allowNull: false },
      byteSize: { type: DataTypes.BIGINT, allowNull: false },
      mediaType: { type: DataTypes.STRING(100), allowNull: false },
      width: { type: DataTypes.INTEGER, allowNull: false },
      height: { type: DataTypes.INTEGER, allowNull: false },
      bitDepth: { type: DataTypes.INTEGER, allowNull: false },
      frameCount: { type: DataTypes.INTEGER, allowNull: false },
      coverFrameIndex: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      pixelSizeNm: { type: DataTypes.DOUBLE, allowNull: true },
      pixelSizeSource: { type: DataTypes.STRING(40), allowNull: true },
      notes: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      acquiredAt: { type: DataTypes.DATE, allowNull: true },
      deletedAt: { type: DataTypes.DATE, allowNull: true },
      ...timestamps,
    },
    base('images'),
  )
  Frame.init(
    {
      id,
      index: { type: DataTypes.INTEGER, allowNull: false },
      field: { type: DataTypes.DOUBLE, allowNull: true },
      fieldUnit: { type: DataTypes.STRING(10), allowNull: true },
      temperatureK: { type: DataTypes.DOUBLE, allowNull: true },
      pulseField: { type: DataTypes.DOUBLE, allowNull: true },
      pulseDurationS: { type: DataTypes.DOUBLE, allowNull: true },
      timeS: { type: DataTypes.DOUBLE, allowNull: true },
      assigneeId: { type: DataTypes.INTEGER, allowNull: true },
      annotationStatus: { type: DataTypes.STRING(20), allowNull: false, defaultValue: 'new' },
      ...timestamps,
    },
    base('frames'),
  )
  Annotation.init(
    {
      id,
      version: { type: DataTypes.INTEGER, allowNull: true },
      state: { type: DataTypes.STRING(20), allowNull: false, defaultValue: 'saved' },
      basedOnVersion: { type: DataTypes.INTEGER, allowNull: true },
      maskKey: { type: DataTypes.STRING(500), allowNull: false },
      maskEncoding: { type: DataTypes.STRING(40), allowNull: false },
      shapes: { type: DataTypes.JSONB, allowNull: false, defaultValue: [] },
      authorId: { type: DataTypes.INTEGER, allowNull: true },
      ...timestamps,
    },
    base('annotations'),
  )
  Analysis.init(
    {
      id,
      annotationId: { type: DataTypes.INTEGER, allowNull: true },
      recipe: { type: DataTypes.JSONB, allowNull: false },
      engineVersion: { type: DataTypes.STRING(40), allowNull: false },
      results: { type: DataTypes.JSONB, allowNull: true },
      status: { type: DataTypes.STRING(30), allowNull: false, defaultValue: 'draft' },
      createdById: { type: DataTypes.INTEGER, allowNull: true },
      approvedById: { type: DataTypes.INTEGER, allowNull: true },
      approvedAt: { type: DataTypes.DATE, allowNull: true },
      error: { type: DataTypes.TEXT, allowNull: true },
      ...timestamps,
    },
    base('analyses'),
  )
  Review.init(
    {
      id,
      reviewerId: { type: DataTypes.INTEGER, allowNull: true },
      fromStatus: { type: DataTypes.STRING(30), allowNull: false },
      toStatus: { type: DataTypes.STRING(30), allowNull: false },
      message: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      ...timestamps,
    },
    base('reviews'),
  )
  Comment.init(
    {
      id,
      authorId: { type: DataTypes.INTEGER, allowNull: true },
      body: { type: DataTypes.TEXT, allowNull: false },
      x: { type: DataTypes.DOUBLE, allowNull: true },
      y: { type: DataTypes.DOUBLE, allowNull: true },
      resolvedAt: { type: DataTypes.DATE, allowNull: true },
      ...timestamps,
    },
    base('comments'),
  )
  AuditEvent.init(
    {
      id,
      labId: { type: DataTypes.INTEGER, allowNull: true },
      actorId: { type: DataTypes.INTEGER, allowNull: true },
      action: { type: DataTypes.STRING(80), allowNull: false },
      entityType: { type: DataTypes.STRING(40), allowNull: false },
      entityId: { type: DataTypes.INTEGER, allowNull: true },
      before: { type: DataTypes.JSONB, allowNull: true },
      after: { type: DataTypes.JSONB, allowNull: true },
      createdAt: DataTypes.DATE,
    },
    { ...base('audit_events'), updatedAt: false },
  )

  StackRun.init(
    {
      id,
      imageId: { type: DataTypes.INTEGER, allowNull: false },
      recipe: { type: DataTypes.JSONB, allowNull: false },
      engineVersion: { type: DataTypes.STRING(40), allowNull: false },
      status: { type: DataTypes.STRING(20), allowNull: false, defaultValue: 'queued' },
      framesTotal: { type: DataTypes.INTEGER, allowNull: false },
      framesDone: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      threshold: { type: DataTypes.DOUBLE, allowNull: true },
      summary: { type: DataTypes.JSONB, allowNull: true },
      error: { type: DataTypes.TEXT, allowNull: true },
      attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
      worker: { type: DataTypes.STRING(100), allowNull: true },
      heartbeatAt: { type: DataTypes.DATE, allowNull: true },
      startedAt: { type: DataTypes.DATE, allowNull: true },
      finishedAt: { type: DataTypes.DATE, allowNull: true },
      createdById: { type: DataTypes.INTEGER, allowNull: true },
      ...timestamps,
    },
    base('stack_runs'),
  )
  StackFrameResult.init(
    {
      id,
      runId: { type: DataTypes.INTEGER, allowNull: false },
      frameIndex: { type: DataTypes.INTEGER, allowNull: false },
      measurements: { type: DataTypes.JSONB, allowNull: true },
      maskKey: { type: DataTypes.STRING(500), allowNull: true },
      error: { type: DataTypes.TEXT, allowNull: true },
      ...timestamps,
    },
    base('stack_frame_results'),
  )

  Invitation.init(
    {
      id,
      labId: { type: DataTypes.INTEGER, allowNull: false },
      email: { type: DataTypes.STRING(320), allowNull: false },
      role: { type: DataTypes.STRING(20), allowNull: false },
      tokenHash: { type: DataTypes.STRING(64), allowNull: false, unique: true },
      invitedById: { type: DataTypes.INTEGER, allowNull: true },
      expiresAt: { type: DataTypes.DATE, allowNull: false },
      usedAt: { type: DataTypes.DATE, allowNull: true },
      usedById: { type: DataTypes.INTEGER, allowNull: true },
      revokedAt: { type: DataTypes.DATE, allowNull: true },
      ...timestamps,
    },
    base('invitations'),
  )
  PasswordReset.init(
    {
      id,
      userId: { type: DataTypes.INTEGER, allowNull: false },
      purpose: { type: DataTypes.STRING(20), allowNull: false },
      tokenHash: { type: DataTypes.STRING(64), allowNull: false, unique: true },
      expiresAt: { type: DataTypes.DATE, allowNull: false },
      usedAt: { type: DataTypes.DATE, allowNull: true },
      ...timestamps,
    },
    base('password_resets'),
  )
  ApiToken.init(
    {
      id,
      userId: { type: DataTypes.INTEGER, allowNull: false },
      name: { type: DataTypes.STRING(100), allowNull: false },
      tokenHash: { type: DataTypes.STRING(64), allowNull: false, unique: true },
      displayPrefix: { type: DataTypes.STRING(16), allowNull: false },
      scope: { type: DataTypes.STRING(20), allowNull: false, defaultValue: 'read' },
      expiresAt: { type: DataTypes.DATE, allowNull: true },
      lastUsedAt: { type: DataTypes.DATE, allowNull: true },
      revokedAt: { type: DataTypes.DATE, allowNull: true },
      ...timestamps,
    },
    base('api_tokens'),
  )
  SavedComparison.init(
    {
      id,
      labId: { type: DataTypes.INTEGER, allowNull: false },
      name: { type: DataTypes.STRING(200), allowNull: false },
      query: { type: DataTypes.JSONB, allowNull: false },
      createdById: { type: DataTypes.INTEGER, allowNull: true },
      ...timestamps,
    },
    base('saved_comparisons'),
  )

  LabMaterial.init(
    {
      id,
      labId: { type: DataTypes.INTEGER, allowNull: false },
      name: { type: DataTypes.STRING(200), allowNull: false },
      msAPerM: { type: DataTypes.DOUBLE, allowNull: false, field: 'ms_a_per_m' },
      aJPerM: { type: DataTypes.DOUBLE, allowNull: false, field: 'a_j_per_m' },
      kJPerM3: { type: DataTypes.DOUBLE, allowNull: false, field: 'k_j_per_m3' },
      tcK: { type: DataTypes.DOUBLE, allowNull: true, field: 'tc_k' },
      source: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
      ...timestamps,
    },
    base('lab_materials'),
  )

  Lab.hasMany(Membership, { foreignKey: 'labId' })
  Membership.belongsTo(Lab, { foreignKey: 'labId' })
  User.hasMany(Membership, { foreignKey: 'userId' })
  Membership.belongsTo(User, { foreignKey: 'userId' })
  Lab.hasMany(Project, { foreignKey: 'labId' })
  Project.belongsTo(Lab, { foreignKey: 'labId' })
  Project.hasMany(Sample, { foreignKey: 'projectId' })
  Sample.belongsTo(Project, { foreignKey: 'projectId' })
  Project.hasMany(Image, { foreignKey: 'projectId' })
  Image.belongsTo(Project, { foreignKey: 'projectId' })
  Sample.hasMany(Image, { foreignKey: 'sampleId' })
  Image.belongsTo(Sample, { foreignKey: 'sampleId' })
  Image.hasMany(Frame, { foreignKey: 'imageId', as: 'frames' })
  Frame.belongsTo(Image, { foreignKey: 'imageId' })
  Frame.belongsTo(User, { foreignKey: 'assigneeId', as: 'assignee' })
  Frame.hasMany(Annotation, { foreignKey: 'frameId' })
  Annotation.belongsTo(Frame, { foreignKey: 'frameId' })
  Annotation.belongsTo(User, { foreignKey: 'authorId', as: 'author' })
  Frame.hasMany(Analysis, { foreignKey: 'frameId' })
  Analysis.belongsTo(Frame, { foreignKey: 'frameId' })
  Analysis.belongsTo(Annotation, { foreignKey: 'annotationId' })
  Analysis.hasMany(Review, { foreignKey: 'analysisId' })
  Analysis.hasMany(Comment, { foreignKey: 'analysisId' })
  Image.hasMany(StackRun, { foreignKey: 'imageId' })
  StackRun.belongsTo(Image, { foreignKey: 'imageId' })
  StackRun.hasMany(StackFrameResult, { foreignKey: 'runId', as: 'frameResults' })
  Invitation.belongsTo(Lab, { foreignKey: 'labId' })
  Invitation.belongsTo(User, { foreignKey: 'invitedById', as: 'invitedBy' })
  PasswordReset.belongsTo(User, { foreignKey: 'userId' })
  ApiToken.belongsTo(User, { foreignKey: 'userId' })
  SavedComparison.belongsTo(User, { foreignKey: 'createdById', as: 'createdBy' })
  Review.belongsTo(User, { foreignKey: 'reviewerId', as: 'reviewer' })
  Comment.belongsTo(User, { foreignKey: 'authorId', as: 'author' })
  LabMaterial.belongsTo(Lab, { foreignKey: 'labId' })

  return models
}

const models: Models = { User, Lab, Membership, Project, Sample, Image, Frame, Annotation, Analysis, Review, Comment, AuditEvent, StackRun, StackFrameResult, Invitation, PasswordReset, ApiToken, SavedComparison, LabMaterial }
