/**
 * The frame that stands for an image in lists and reports: the one with the most domain-wall detail, found when the
 * frames are rendered at ingest (a field sweep starts and ends saturated, so its first frame shows no domains). Images
 * stored before this migration keep frame 0.
 */
import { DataTypes, type QueryInterface } from 'sequelize'

export async function up({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.addColumn('images', 'cover_frame_index', { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 })
}

export async function down({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.removeColumn('images', 'cover_frame_index')
}
