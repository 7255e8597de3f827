/**
 * Frames of a stack run shared between workers: a worker claims a frame (one row, first come first served) before it
 * measures it, so two workers on one run never measure the same frame, and the row says who measured it.
 */
import { DataTypes, type QueryInterface } from 'sequelize'

export async function up({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.createTable('stack_frame_claims', {
    run_id: { type: DataTypes.INTEGER, allowNull: false, primaryKey: true, references: { model: 'stack_runs', key: 'id' }, onDelete: 'CASCADE' },
    frame_index: { type: DataTypes.INTEGER, allowNull: false, primaryKey: true },
    worker: { type: DataTypes.STRING(100), allowNull: false },
    claimed_at: { type: DataTypes.DATE, allowNull: false },
  })
}

export async function down({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.dropTable('stack_frame_claims')
}
