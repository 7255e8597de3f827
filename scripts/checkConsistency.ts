/**
 * `npm run check:consistency [-- --fix] [--min-age <minutes>]`: list objects no row refers to, rows whose objects are
 * missing, and images with incomplete frame rows; `--fix` removes the orphaned objects (older than --min-age, default
 * 30 minutes, so uploads in progress are left alone). Exit code 1 when anything is inconsistent after the run.
 */
import { loadConfig } from '../server/config'
import { createDeps } from '../server/runtime'
import { checkConsistency } from '../server/services/consistencyService'

const args = process.argv.slice(2)
const fix = args.includes('--fix')
const ageFlag = args.indexOf('--min-age')
const minAgeMinutes = ageFlag >= 0 ? Number(args[ageFlag + 1]) : 30
if (!Number.isFinite(minAgeMinutes) || minAgeMinutes < 0) {
  console.error('--min-age takes a number of minutes (0 or more)')
  process.exit(2)
}
const deps = createDeps(loadConfig())
try {
  const report = await checkConsistency(deps, { fix, minAgeMinutes })
  console.log(`objects checked: ${report.objectsChecked}`)
  console.log(`orphaned objects (older than ${minAgeMinutes} min): ${report.orphanedObjects.length}`)
  for (const key of report.orphanedObjects) console.log(`  ${fix ? 'removed' : 'orphan '} ${key}`)
  console.log(`missing objects: ${report.missingObjects.length}`)
  for (const m of report.missingObjects) console.log(`  missing ${m.key} (${m.owner})`)
  console.log(`images with incomplete frame rows: ${report.incompleteImages.length}`)
  for (const i of report.incompleteImages) console.log(`  image ${i.imageId}: ${i.frameRows} of ${i.expectedFrames} frame rows`)
  const remaining = (fix ? 0 : report.orphanedObjects.length) + report.missingObjects.length + report.incompleteImages.length
  process.exitCode = remaining ? 1 : 0
} finally {
  await deps.dispose()
}
