/** Wall-motion durations for people, in the unit a lab writes them (ns, µs, ms, s). */
import { formatNumber } from '@/formatQuantity'

const DURATION_UNITS: [number, string][] = [
  [1, 's'],
  [1e-3, 'ms'],
  [1e-6, 'µs'],
  [1e-9, 'ns'],
]

/** "4 µs", "12 ms", "2.5 s": the largest unit in which the value is at least 1. */
export function formatDuration(seconds: number | null | undefined, significantDigits = 4): string {
  if (seconds === null || seconds === undefined || !Number.isFinite(seconds)) return '—'
  const [scale, unit] = DURATION_UNITS.find(([s]) => Math.abs(seconds) >= s) ?? DURATION_UNITS[DURATION_UNITS.length - 1]
  return `${formatNumber(seconds / scale, significantDigits)} ${unit}`
}
