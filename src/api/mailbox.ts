/** Development only: the messages the local SMTP sink received (the route does not exist in production). */
import { http } from './http'

export interface DevMailMessage {
  id: string
  to: string
  subject: string
  /** ISO 8601. */
  date: string
  text: string
}

/** Newest first; throws `ApiError` 404 `route-not-found` where the dev mailbox is not enabled. */
export function listMailbox(): Promise<DevMailMessage[]> {
  return http.get<DevMailMessage[]>('/dev/mailbox')
}
