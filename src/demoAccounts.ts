import type { LabRole } from '@shared/auth/permissions'

/**
 * The demo lab's sign-ins, as created by `npm run db:seed` (scripts/demoScenario.ts), shown as a hint on the sign-in
 * page. They exist only in a seeded database; a real deployment has its own people and no such accounts.
 */
export const DEMO_ACCOUNTS: readonly { email: string; role: LabRole }[] = [
  { email: 'noor.haddad@kestrel-lab.example', role: 'admin' },
  { email: 'elena.varga@kestrel-lab.example', role: 'pi' },
  { email: 'tobias.lindgren@kestrel-lab.example', role: 'microscopist' },
  { email: 'priya.raman@kestrel-lab.example', role: 'annotator' },
  { email: 'jonas.adeyemi@kestrel-lab.example', role: 'reviewer' },
]

export const DEMO_PASSWORD = 'remanence-demo-2026'
