/** The audit log: who did what to which object, with the state before and after. */
import type { Transaction } from 'sequelize'
import { AuditEvent } from '../models'

export async function recordAudit(
  event: { labId: number | null; actorId: number | null; action: string; entityType: string; entityId: number | null; before?: object | null; after?: object | null },
  transaction?: Transaction,
): Promise<void> {
  await AuditEvent.create(
    { ...event, before: (event.before ?? null) as Record<string, unknown> | null, after: (event.after ?? null) as Record<string, unknown> | null },
    { transaction },
  )
}
