/**
 * The web server's analysis threads, shared by everything its requests hand off (measurements of saved masks, the
 * previews and thumbnails of uploads). The threads start on first use, so an idle server, and every script that
 * builds the app's dependencies, holds none.
 */
import { createAnalysisPool, type AnalysisPool } from './analysisPool'

export interface LazyAnalysisPool {
  /** Worker threads the pool runs once started. */
  readonly size: number
  /** The pool, started on the first call. @throws Error once closed. */
  get(): AnalysisPool
  close(): Promise<void>
}

/**
 * Niceness of the web server's analysis threads: below the request thread, so that on a machine whose cores are all
 * busy an upload's rendering waits for the requests of the people browsing, not the other way round.
 */
const WEB_ANALYSIS_NICENESS = 10

export function createLazyAnalysisPool(size: number): LazyAnalysisPool {
  let pool: AnalysisPool | null = null
  let closed = false
  return {
    size,
    get() {
      if (closed) throw new Error('The analysis pool is closed.')
      pool ??= createAnalysisPool({ size, niceness: WEB_ANALYSIS_NICENESS })
      return pool
    },
    async close() {
      closed = true
      await pool?.close()
      pool = null
    },
  }
}
