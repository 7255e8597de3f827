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

export function createLazyAnalysisPool(size: number): LazyAnalysisPool {
  let pool: AnalysisPool | null = null
  let closed = false
  return {
    size,
    get() {
      if (closed) throw new Error('The analysis pool is closed.')
      pool ??= createAnalysisPool({ size })
      return pool
    },
    async close() {
      closed = true
      await pool?.close()
      pool = null
    },
  }
}
