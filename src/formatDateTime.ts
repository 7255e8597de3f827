const DATE_TIME = new Intl.DateTimeFormat(undefined, { dateStyle: 'medium', timeStyle: 'short' })

/**
 * A moment for people, in their browser's language and time zone ("Dec 3, 2026, 6:07 PM"); `none` when there is
 * no moment (a link that never expires says "never", a token not used yet "not yet").
 */
export function formatDateTime(when: string | Date | null | undefined, none = '—'): string {
  if (when === null || when === undefined) return none
  return DATE_TIME.format(typeof when === 'string' ? new Date(when) : when)
}

const DATE = new Intl.DateTimeFormat(undefined, { dateStyle: 'medium' })
const TIME = new Intl.DateTimeFormat(undefined, { timeStyle: 'short' })

/** A day for people ("Dec 3, 2026"), in their browser's language. */
export function formatDate(when: string | Date): string {
  return DATE.format(typeof when === 'string' ? new Date(when) : when)
}

/** A moment of a working session: the time alone when it is today ("6:07 PM"), else as formatDateTime. */
export function formatRecent(when: string | Date): string {
  const at = typeof when === 'string' ? new Date(when) : when
  return at.toDateString() === new Date().toDateString() ? TIME.format(at) : formatDateTime(at)
}
