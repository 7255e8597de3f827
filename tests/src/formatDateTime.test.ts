import { describe, expect, it } from 'vitest'
import { formatDate, formatDateTime, formatRecent } from '@/formatDateTime'

// Expected texts come from Intl with the same options in this test's locale (the browser's, by design).
const dateTime = new Intl.DateTimeFormat(undefined, { dateStyle: 'medium', timeStyle: 'short' })
const time = new Intl.DateTimeFormat(undefined, { timeStyle: 'short' })

describe('formatDateTime', () => {
  it('When there is a moment, then it reads as date and time; without one, the given word (a dash by default)', () => {
    expect(formatDateTime('2026-11-20T09:30:00.000Z')).toBe(dateTime.format(new Date('2026-11-20T09:30:00.000Z')))
    expect(formatDateTime(null)).toBe('—')
    expect(formatDateTime(null, 'never')).toBe('never')
  })

  it('When a day is shown, then it carries no time', () => {
    expect(formatDate('2026-11-20T09:30:00.000Z')).toBe(new Intl.DateTimeFormat(undefined, { dateStyle: 'medium' }).format(new Date('2026-11-20T09:30:00.000Z')))
  })

  it('When a save happened today, then only its time is given; an earlier one gives its date too', () => {
    const now = new Date()
    expect(formatRecent(now)).toBe(time.format(now))
    const lastYear = new Date(now.getFullYear() - 1, 5, 1, 14, 5)
    expect(formatRecent(lastYear.toISOString())).toBe(dateTime.format(lastYear))
  })
})
