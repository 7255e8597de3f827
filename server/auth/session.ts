/** Cookie sessions stored in PostgreSQL (connect-pg-simple), so a restart of the web server signs nobody out. */
import session from 'express-session'
import connectPgSimple from 'connect-pg-simple'
import pg from 'pg'
import type { AppConfig } from '../config'

export const SESSION_COOKIE = 'remanence.sid'

export function createSessionMiddleware(config: AppConfig) {
  const PgStore = connectPgSimple(session)
  const pool = new pg.Pool({ connectionString: config.databaseUrl, max: 5, connectionTimeoutMillis: 3_000 })
  // A stopped database must not crash the process through an unhandled pool error.
  pool.on('error', () => {})
  const store = new PgStore({ pool, tableName: 'session', createTableIfMissing: false, pruneSessionInterval: 15 * 60 })
  const middleware = session({
    name: SESSION_COOKIE,
    secret: config.sessionSecret,
    store,
    resave: false,
    saveUninitialized: false,
    rolling: true,
    cookie: { httpOnly: true, sameSite: 'lax', secure: config.secureCookies, maxAge: 8 * 60 * 60 * 1000 },
  })
  return {
    middleware,
    async close() {
      store.close()
      await pool.end()
    },
  }
}
