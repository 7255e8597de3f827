const DAY_MS = 86_400_000

/** Whole days left before `until`, rounded up (so "1 day" until the last moment); 0 once it has passed. */
export function daysLeft(until: string | Date, now: Date = new Date()): number {
  const ms = new Date(until).getTime() - now.getTime()
  return ms <= 0 ? 0 : Math.ceil(ms / DAY_MS)
}
