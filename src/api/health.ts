/** Reachability of the server's database, object store and mail relay. */
import type { HealthReport } from '@shared/types/api'
import { http } from './http'

/** The report is the answer both when all parts are up (200) and when one is down (503). */
export function getHealth(): Promise<HealthReport> {
  return http.get<HealthReport>('/health', { acceptStatuses: [503] })
}
