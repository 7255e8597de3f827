/** `npm run db:migrate`: apply pending migrations to DATABASE_URL (default: the local cluster). */
import { loadConfig } from '../server/config'
import { createSequelize } from '../server/db'
import { migrateToLatest } from '../server/migrator'

const sequelize = createSequelize(loadConfig().databaseUrl)
try {
  const applied = await migrateToLatest(sequelize)
  console.log(applied.length ? `[migrate] applied ${applied.join(', ')}` : '[migrate] schema is up to date')
} finally {
  await sequelize.close()
}
