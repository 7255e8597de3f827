const UNITS = ['byte', 'kilobyte', 'megabyte', 'gigabyte', 'terabyte'] as const

/** A file size for people: "512 bytes", "3.4 MB", "1.2 GB" (decimal units, as file managers and the upload limit use). */
export function formatByteSize(bytes: number): string {
  let value = Math.max(0, bytes)
  let unit = 0
  while (value >= 1000 && unit < UNITS.length - 1) {
    value /= 1000
    unit++
  }
  // English, as the rest of the interface: "3.4 MB" in any browser language.
  return new Intl.NumberFormat('en-US', {
    style: 'unit',
    unit: UNITS[unit],
    unitDisplay: unit === 0 ? 'long' : 'short',
    maximumFractionDigits: unit === 0 || value >= 100 ? 0 : 1,
  }).format(value)
}
