/** `npm run restore -- --from <folder>`: verify the backup's checksums, then replace the database and the bucket with it. */
import { loadConfig } from '../server/config'
import { createObjectStore } from '../server/storage/objectStore'
import { restore } from '../server/services/backupService'

const config = loadConfig()
const flag = process.argv.indexOf('--from')
if (flag < 0 || !process.argv[flag + 1]) {
  console.error('usage: npm run restore -- --from <backup folder>')
  process.exit(2)
}
const store = createObjectStore(config.s3)
try {
  const { objects } = await restore({ databaseUrl: config.databaseUrl, store }, process.argv[flag + 1])
  console.log(`restored the database and ${objects} objects from ${process.argv[flag + 1]}`)
} catch (err) {
  console.error(`restore failed: ${(err as Error).message}`)
  process.exitCode = 1
} finally {
  store.close()
}
