/** Probes each dependency with a short time limit, so /api/health answers quickly even when one hangs. */
import type { Sequelize } from 'sequelize'
import type { HealthReport } from '../../shared/types/api'
import type { ObjectStore } from '../storage/objectStore'
import type { Mailer } from '../mail/mailer'

const PROBE_TIMEOUT_MS = 2_500

function withTimeout(promise: Promise<unknown>): Promise<'up' | 'down'> {
  let timer: NodeJS.Timeout
  const timeout = new Promise<'down'>((resolve) => (timer = setTimeout(() => resolve('down'), PROBE_TIMEOUT_MS)))
  return Promise.race([promise.then(() => 'up' as const, () => 'down' as const), timeout]).finally(() => clearTimeout(timer))
}

export async function checkHealth(deps: { sequelize: Sequelize; store: ObjectStore; mailer: Mailer }): Promise<HealthReport> {
  const [db, storage, mail] = await Promise.all([
    withTimeout(deps.sequelize.query('SELECT 1')),
    withTimeout(deps.store.ping()),
    withTimeout(deps.mailer.ping()),
  ])
  return { ok: db === 'up' && storage === 'up' && mail === 'up', db, storage, mail }
}
