/** Cookie sessions stored in PostgreSQL (connect-pg-simple), so a restart of the web server signs nobody out. */
import session from 'express-session'
import connectPgSimple from 'connect-pg-simple'
import pg from 'pg'
import type { AppConfig } from '../config'

export const SESSION_COOKIE = 'remanence.sid'

/**
 * With a rolling session every response renews the cookie, and express-session also asks the store to move the
 * session's expiry: an UPDATE per request. The store's expiry is moved at most once per this interval per session
 * instead (the cookie is still renewed on every response), so a session can end in the store up to this much before
 * its cookie says — minutes on an 8-hour session.
 */
const STORE_TOUCH_INTERVAL_MS = 5 * 60 * 1000
/** Sessions whose last store touch is remembered; past this the memory is simply cleared (the next touches go through). */
const MAX_REMEMBERED_TOUCHES = 10_000

/** Let `store.touch` through for a session at most once per STORE_TOUCH_INTERVAL_MS. */
function throttleTouches(store: session.Store): void {
  const touch = store.touch?.bind(store)
  if (touch === undefined) return
  const lastTouch = new Map<string, number>()
  store.touch = (sid, sess, callback) => {
    const now = Date.now()
    if (now - (lastTouch.get(sid) ?? -Infinity) < STORE_TOUCH_INTERVAL_MS) {
      callback?.()
      return
    }
    if (lastTouch.size >= MAX_REMEMBERED_TOUCHES) lastTouch.clear()
    lastTouch.set(sid, now)
    touch(sid, sess, callback)
  }
}

export function createSessionMiddleware(config: AppConfig) {
  const PgStore = connectPgSimple(session)
  const pool = new pg.Pool({ connectionString: config.databaseUrl, max: 5, connectionTimeoutMillis: 3_000 })
  // A stopped database must not crash the process through an unhandled pool error.
  pool.on('error', () => {})
  const store = new PgStore({ pool, tableName: 'session', createTableIfMissing: false, pruneSessionInterval: 15 * 60 })
  throttleTouches(store)
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
