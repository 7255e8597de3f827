/**
 * Optimistic versioning of masks: a save based on an out-of-date version is kept as a "conflict" copy (no version
 * number, pointing at the version it was based on) so that nothing an annotator drew is ever lost.
 */
import { DataTypes, type QueryInterface } from 'sequelize'

export async function up({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.changeColumn('annotations', 'version', { type: DataTypes.INTEGER, allowNull: true })
  await qi.addColumn('annotations', 'state', { type: DataTypes.STRING(20), allowNull: false, defaultValue: 'saved' })
  await qi.addColumn('annotations', 'based_on_version', { type: DataTypes.INTEGER, allowNull: true })
  await qi.addColumn('analyses', 'error', { type: DataTypes.TEXT, allowNull: true })
  await qi.addIndex('annotations', ['frame_id', 'state'])
}

export async function down({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.removeIndex('annotations', ['frame_id', 'state'])
  await qi.removeColumn('analyses', 'error')
  await qi.removeColumn('annotations', 'based_on_version')
  await qi.removeColumn('annotations', 'state')
  await qi.sequelize.query('DELETE FROM annotations WHERE version IS NULL')
  await qi.changeColumn('annotations', 'version', { type: DataTypes.INTEGER, allowNull: false })
}
