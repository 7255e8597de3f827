/** A lab's own material constants (Ms, A, K, Tc) with their source, for the theory checks beside the built-in table. */
import { DataTypes, type QueryInterface } from 'sequelize'

export async function up({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.createTable('lab_materials', {
    id: { type: DataTypes.INTEGER, autoIncrement: true, primaryKey: true, allowNull: false },
    lab_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'labs', key: 'id' }, onDelete: 'CASCADE' },
    name: { type: DataTypes.STRING(200), allowNull: false },
    ms_a_per_m: { type: DataTypes.DOUBLE, allowNull: false },
    a_j_per_m: { type: DataTypes.DOUBLE, allowNull: false },
    k_j_per_m3: { type: DataTypes.DOUBLE, allowNull: false },
    tc_k: { type: DataTypes.DOUBLE, allowNull: true },
    source: { type: DataTypes.TEXT, allowNull: false, defaultValue: '' },
    created_at: { type: DataTypes.DATE, allowNull: false },
    updated_at: { type: DataTypes.DATE, allowNull: false },
  })
  // One row per name in a lab, so a choice in the theory panel is never ambiguous.
  await qi.addConstraint('lab_materials', { type: 'unique', fields: ['lab_id', 'name'], name: 'lab_materials_lab_name_unique' })
}

export async function down({ context: qi }: { context: QueryInterface }): Promise<void> {
  await qi.dropTable('lab_materials')
}
