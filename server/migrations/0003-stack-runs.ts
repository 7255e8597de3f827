/** Background processing of whole stacks: one run per (image, recipe) request, one result row per frame. */
import { DataTypes, type QueryInterface } from 'sequelize'

export async function up({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.createTable('stack_runs', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true, allowNull: false },
    image_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'images', key: 'id' }, onDelete: 'CASCADE' },
    recipe: { type: DataTypes.JSONB, allowNull: false },
    engine_version: { type: DataTypes.STRING(40), allowNull: false },
    status: { type: DataTypes.STRING(20), allowNull: false, defaultValue: 'queued' },
    frames_total: { type: DataTypes.INTEGER, allowNull: false },
    frames_done: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    threshold: { type: DataTypes.DOUBLE, allowNull: true },
    summary: { type: DataTypes.JSONB, allowNull: true },
    error: { type: DataTypes.TEXT, allowNull: true },
    attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
    worker: { type: DataTypes.STRING(100), allowNull: true },
    heartbeat_at: { type: DataTypes.DATE, allowNull: true },
    started_at: { type: DataTypes.DATE, allowNull: true },
    finished_at: { type: DataTypes.DATE, allowNull: true },
    created_by_id: { type: DataTypes.INTEGER, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
    created_at: { type: DataTypes.DATE, allowNull: false },
    updated_at: { type: DataTypes.DATE, allowNull: false },
  })
  await qi.addIndex('stack_runs', ['image_id', 'created_at'])
  await qi.addIndex('stack_runs', ['status', 'heartbeat_at'])
  await qi.createTable('stack_frame_results', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true, allowNull: false },
    run_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'stack_runs', key: 'id' }, onDelete: 'CASCADE' },
    frame_index: { type: DataTypes.INTEGER, allowNull: false },
    measurements: { type: DataTypes.JSONB, allowNull: true },
    mask_key: { type: DataTypes.STRING(500), allowNull: true },
    error: { type: DataTypes.TEXT, allowNull: true },
    created_at: { type: DataTypes.DATE, allowNull: false },
    updated_at: { type: DataTypes.DATE, allowNull: false },
  })
  // One row per frame and run: a resumed job overwrites, never duplicates.
  await qi.addConstraint('stack_frame_results', { type: 'unique', fields: ['run_id', 'frame_index'], name: 'stack_frame_results_run_frame_unique' })
}

export async function down({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.dropTable('stack_frame_results')
  await qi.dropTable('stack_runs')
}
