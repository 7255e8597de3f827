/**
 * Versioned migrations with umzug: every file in server/migrations/ runs once, in name order, recorded in the
 * `SequelizeMeta` table. Never `sync({ force })` outside tests.
 */
import { Umzug, SequelizeStorage } from 'umzug'
import type { QueryInterface, Sequelize } from 'sequelize'
import * as initialSchema from './migrations/0001-initial-schema'
import * as annotationConflicts from './migrations/0002-annotation-conflicts'
import * as stackRuns from './migrations/0003-stack-runs'
import * as collaboration from './migrations/0004-collaboration'
import * as labMaterials from './migrations/0005-lab-materials'
import * as motionFrames from './migrations/0006-motion-frames'
import * as frameClaims from './migrations/0007-frame-claims'
import * as coverFrames from './migrations/0008-cover-frames'

/** Migrations are listed here (not globbed) so the bundle of a deployment and the test runner see the same set. */
const MIGRATIONS = [
  { name: '0001-initial-schema', module: initialSchema },
  { name: '0002-annotation-conflicts', module: annotationConflicts },
  { name: '0003-stack-runs', module: stackRuns },
  { name: '0004-collaboration', module: collaboration },
  { name: '0005-lab-materials', module: labMaterials },
  { name: '0006-motion-frames', module: motionFrames },
  { name: '0007-frame-claims', module: frameClaims },
  { name: '0008-cover-frames', module: coverFrames },
]

export function createMigrator(sequelize: Sequelize) {
  return new Umzug<QueryInterface>({
    migrations: MIGRATIONS.map(({ name, module }) => ({
      name,
      up: (params) => module.up(params),
      down: (params) => module.down(params),
    })),
    context: sequelize.getQueryInterface(),
    storage: new SequelizeStorage({ sequelize }),
    logger: undefined,
  })
}

/** Apply pending migrations; returns the names applied. */
export async function migrateToLatest(sequelize: Sequelize): Promise<string[]> {
  const applied = await createMigrator(sequelize).up()
  return applied.map((m) => m.name)
}
