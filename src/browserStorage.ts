/**
 * This browser's remembered choices (localStorage). Storage can be switched off or full; a choice then simply is not
 * remembered, so reading gives null and writing does nothing instead of throwing.
 */
export function readStored(key: string): string | null {
  try {
    return window.localStorage.getItem(key)
  } catch {
    return null
  }
}

export function writeStored(key: string, value: string): void {
  try {
    window.localStorage.setItem(key, value)
  } catch {
    // Not remembered; the choice still holds for this visit.
  }
}
