/**
 * Motion series (issue #8): per frame, the field pulse that preceded it (amplitude in the frame's `field_unit`,
 * duration in seconds) or the acquisition time of a constant-field series, from the frames CSV. All nullable.
 */
import { DataTypes, type QueryInterface } from 'sequelize'

export async function up({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.addColumn('frames', 'pulse_field', { type: DataTypes.DOUBLE, allowNull: true })
  await qi.addColumn('frames', 'pulse_duration_s', { type: DataTypes.DOUBLE, allowNull: true })
  await qi.addColumn('frames', 'time_s', { type: DataTypes.DOUBLE, allowNull: true })
}

export async function down({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.removeColumn('frames', 'time_s')
  await qi.removeColumn('frames', 'pulse_duration_s')
  await qi.removeColumn('frames', 'pulse_field')
}
