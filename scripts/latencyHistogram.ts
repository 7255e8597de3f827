/**
 * Latency statistics of the load test (scripts/loadTest.ts), kept apart so that they can be tested.
 */
import { build } from 'hdr-histogram-js'

export interface LatencySummary {
  /** Answers measured (before the correction below adds any). */
  answers: number
  p50: number
  p90: number
  p95: number
  p97_5: number
  p99: number
  max: number
}

/**
 * Percentiles of answer times, ms, corrected for coordinated omission with `intervalMs`, the time a person waits
 * between requests: an answer later than that also stands for the requests it held up, recorded as value − interval,
 * value − 2·interval, … (HdrHistogram's copyCorrectedForCoordinatedOmission, G. Tene); answers quicker than the
 * interval add nothing. Values are whole milliseconds, as autocannon reports them.
 * Why not autocannon's own correction: it takes 1/rate as the interval in milliseconds (1 ms at one request a
 * second, where the interval is 1,000 ms), so it records a 200 ms answer about 200 times and inflates every
 * percentile of a paced run.
 */
export function latencySummary(latenciesMs: number[], intervalMs: number): LatencySummary {
  const histogram = build({ lowestDiscernibleValue: 1, highestTrackableValue: 3_600_000, numberOfSignificantValueDigits: 3 })
  for (const ms of latenciesMs) histogram.recordValue(Math.max(0, Math.round(ms)))
  const corrected = histogram.copyCorrectedForCoordinatedOmission(intervalMs)
  const at = (percentile: number) => (latenciesMs.length === 0 ? 0 : corrected.getValueAtPercentile(percentile))
  return { answers: latenciesMs.length, p50: at(50), p90: at(90), p95: at(95), p97_5: at(97.5), p99: at(99), max: latenciesMs.length === 0 ? 0 : corrected.maxValue }
}
