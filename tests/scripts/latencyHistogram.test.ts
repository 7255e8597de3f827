/**
 * The load test's latency statistics (scripts/latencyHistogram.ts): percentiles of the answers of many paced autocannon
 * runs, corrected for coordinated omission with the right interval.
 */
import { createServer, type Server } from 'node:http'
import type { AddressInfo } from 'node:net'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import autocannon from 'autocannon'
import { latencySummary } from '../../scripts/latencyHistogram'

describe('latencySummary', () => {
  it('When answers are quicker than the interval, then the percentiles are those of the answers themselves [D]', () => {
    // 1..100 ms, shuffled: the p-th percentile of 100 equally weighted integers is p itself (worked by hand).
    const values = Array.from({ length: 100 }, (_, i) => ((i * 37) % 100) + 1)
    expect(latencySummary(values, 1000)).toEqual({ answers: 100, p50: 50, p90: 90, p95: 95, p97_5: 98, p99: 99, max: 100 })
  })

  it('When an answer is later than the interval, then it also stands for the requests it held up (HdrHistogram, G. Tene) [from memory]', () => {
    // HdrHistogram's documented correction: a 1,000 ms value with a 100 ms expected interval is recorded as
    // 1000, 900, …, 100 — ten values; with 90 quick answers of 1 ms that makes 100 values, the 95th of which in
    // order is 500 (worked by hand).
    const summary = latencySummary([...Array.from({ length: 90 }, () => 1), 1000], 100)
    expect(summary.answers).toBe(91)
    expect(summary.p50).toBe(1)
    expect(summary.p95).toBe(500)
    expect(summary.max).toBe(1000)
  })

  it('When there are no answers, then every figure is 0', () => {
    expect(latencySummary([], 1000)).toEqual({ answers: 0, p50: 0, p90: 0, p95: 0, p97_5: 0, p99: 0, max: 0 })
  })
})

describe('paced autocannon runs against a server of known delays', () => {
  // Every tenth answer after 200 ms, the others after 5 ms.
  let server: Server
  let url: string
  let served = 0
  beforeAll(async () => {
    server = createServer((_req, res) => {
      const slow = served++ % 10 === 0
      setTimeout(() => res.end('ok'), slow ? 200 : 5)
    })
    await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve))
    url = `http://127.0.0.1:${(server.address() as AddressInfo).port}`
  })
  afterAll(() => new Promise<void>((resolve) => server.close(() => resolve())))

  /** Eight people at `rate` requests a second each, the way scripts/loadTest.ts runs them, with every answer kept. */
  async function paced(rate: number, ignoreCoordinatedOmission: boolean) {
    const answersMs: number[] = []
    const results = await Promise.all(
      Array.from({ length: 8 }, () => {
        const instance = autocannon({ url, connections: 1, connectionRate: rate, duration: 2, skipAggregateResult: true, ignoreCoordinatedOmission } as never) as unknown as Promise<autocannon.Result & { totalCompletedRequests: number }> & NodeJS.EventEmitter
        instance.on('response', (_client: unknown, _status: number, _bytes: number, ms: number) => answersMs.push(ms))
        return instance
      }),
    )
    const aggregated = (autocannon as unknown as { aggregateResult(results: autocannon.Result[], opts: object): autocannon.Result & { latency: { totalCount: number } } }).aggregateResult(results, { url, connections: 8 })
    return { answersMs, aggregated }
  }

  it('When summarised here, then one value per answer and the median is a quick one; autocannon\u2019s own correction counts slow answers many times over', async () => {
    const rate = 2
    const ours = await paced(rate, true)
    expect(ours.answersMs.length).toBeGreaterThan(16)
    const summary = latencySummary(ours.answersMs, 1000 / rate)
    // Answers of 5 and 200 ms are all quicker than the 500 ms between a person's requests: nothing is added.
    expect(summary.p50).toBeLessThan(100)
    expect(summary.max).toBeGreaterThanOrEqual(200)
    expect(ours.aggregated.latency.totalCount).toBe(ours.answersMs.length)

    const builtIn = await paced(rate, false)
    expect(builtIn.aggregated.latency.totalCount).toBeGreaterThan(5 * builtIn.answersMs.length)
    expect(builtIn.aggregated.latency.p50).toBeGreaterThan(summary.p50)
  }, 20_000)
})
