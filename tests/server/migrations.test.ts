import { describe, expect, it, inject } from 'vitest'
import { createSequelize } from '../../server/db'
import { createMigrator } from '../../server/migrator'
import { dropDatabase, recreateDatabase } from './globalSetup'

describe('migrations', () => {
  it('When run on an empty database, then every table exists; down removes them and up brings them back', async () => {
    const url = new URL(inject('databaseUrl'))
    url.pathname = `${url.pathname}_migrations`
    await recreateDatabase(url.toString())
    const sequelize = createSequelize(url.toString())
    try {
      const migrator = createMigrator(sequelize)
      const applied = await migrator.up()
      expect(applied.map((m) => m.name)).toEqual(['0001-initial-schema', '0002-annotation-conflicts', '0003-stack-runs', '0004-collaboration', '0005-lab-materials', '0006-motion-frames', '0007-frame-claims', '0008-cover-frames'])
      const tables = async () =>
        ((await sequelize.getQueryInterface().showAllTables()) as string[]).filter((t) => t !== 'SequelizeMeta').sort()
      const expected = ['analyses', 'annotations', 'api_tokens', 'audit_events', 'comments', 'frames', 'images', 'invitations', 'lab_materials', 'labs', 'memberships', 'password_resets', 'projects', 'reviews', 'samples', 'saved_comparisons', 'session', 'stack_frame_claims', 'stack_frame_results', 'stack_runs', 'users']
      expect(await tables()).toEqual(expected)
      expect(await migrator.up()).toEqual([])
      await migrator.down({ to: 0 })
      expect(await tables()).toEqual([])
      await migrator.up()
      expect(await tables()).toEqual(expected)
    } finally {
      await sequelize.close()
      await dropDatabase(url.toString())
    }
  })
})
