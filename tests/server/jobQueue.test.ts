/**
 * The job queue (server/jobs/jobQueue.ts) on the real PostgreSQL: several processes starting at once on a fresh
 * database — workers started together, or a web server and its worker after an upgrade that adds a queue — all start,
 * although pg-boss's queue creation can deadlock between them (PostgreSQL aborts one; it tries again).
 */
import { describe, expect, inject, it } from 'vitest'
import pg from 'pg'
import { createJobQueue, STACK_HELP_QUEUE, STACK_QUEUE } from '../../server/jobs/jobQueue'
import { dropDatabase, recreateDatabase } from './globalSetup'

describe('job queue', () => {
  it('When four queues start at once on a fresh database, then every one starts and both of our queues exist once (beside pg-boss\'s own)', async () => {
    const url = new URL(inject('databaseUrl'))
    url.pathname = `${url.pathname}_job_queue`
    await recreateDatabase(url.toString())
    const queues = Array.from({ length: 4 }, () => createJobQueue(url.toString()))
    try {
      const started = await Promise.allSettled(queues.map((q) => q.boss()))
      expect(started.map((s) => (s.status === 'rejected' ? String(s.reason) : 'started'))).toEqual(['started', 'started', 'started', 'started'])
      const client = new pg.Client({ connectionString: url.toString() })
      await client.connect()
      try {
        const { rows } = await client.query("SELECT name FROM pgboss.queue WHERE name NOT LIKE '\\_\\_pgboss%' ORDER BY name")
        expect(rows.map((r) => r.name)).toEqual([STACK_QUEUE, STACK_HELP_QUEUE].sort())
      } finally {
        await client.end()
      }
      // A job sent through one of them can be fetched through another.
      await queues[0].sendStackRun(42)
      const [job] = await (await queues[3].boss()).fetch<{ runId: number }>(STACK_QUEUE)
      expect(job.data.runId).toBe(42)
    } finally {
      await Promise.all(queues.map((q) => q.close()))
      await dropDatabase(url.toString())
    }
  }, 60_000)
})
