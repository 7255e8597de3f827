import { describe, expect, it, inject } from 'vitest'
import { createSequelize } from '../../server/db'
import { createMigrator } from '../../server/migrator'
import { recreateDatabase } from './globalSetup'

describe('migrations', () => {
  it('When run on an empty database, then every table exists; down removes them and up brings them back', async () => {
    const url = new URL(inject('databaseUrl'))
    url.pathname = '/remanence_migration_check'
    await recreateDatabase(url.toString())
    const sequelize = createSequelize(url.toString())
    try {
      const migrator = createMigrator(sequelize)
      const applied = await migrator.up()
      expect(applied.map((m) => m.name)).toEqual(['0001-initial-schema', '0002-annotation-conflicts'])
      const tables = async () =>
        ((await sequelize.getQueryInterface().showAllTables()) as string[]).filter((t) => t !== 'SequelizeMeta').sort()
      const expected = ['analyses', 'annotations', 'audit_events', 'comments', 'frames', 'images', 'labs', 'memberships', 'projects', 'reviews', 'samples', 'session', 'users']
      expect(await tables()).toEqual(expected)
      expect(await migrator.up()).toEqual([])
      await migrator.down({ to: 0 })
      expect(await tables()).toEqual([])
      await migrator.up()
      expect(await tables()).toEqual(expected)
    } finally {
      await sequelize.close()
    }
  })
})
