/** `npm run backup -- [--out <folder>]`: database dump + every stored object + a checksum manifest (default .data/backups/<time>). */
import { loadConfig } from '../server/config'
import { createObjectStore } from '../server/storage/objectStore'
import { backup } from '../server/services/backupService'

const config = loadConfig()
const flag = process.argv.indexOf('--out')
const folder = flag >= 0 ? process.argv[flag + 1] : `.data/backups/${new Date().toISOString().replace(/[:.]/g, '-')}`
const store = createObjectStore(config.s3)
try {
  const manifest = await backup({ databaseUrl: config.databaseUrl, store }, folder)
  console.log(`backup written to ${folder}: database + ${manifest.objects.length} objects, checksums in manifest.json`)
} catch (err) {
  console.error(`backup failed: ${(err as Error).message}`)
  process.exitCode = 1
} finally {
  store.close()
}
