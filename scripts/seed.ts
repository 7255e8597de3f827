/**
 * `npm run db:seed`: create the demo lab once (people, roles, projects, samples). Running it again changes nothing.
 */
import { loadConfig } from '../server/config'
import { createSequelize } from '../server/db'
import { defineModels } from '../server/models'
import { hashPassword } from '../server/auth/passwords'
import { DEMO_LAB, DEMO_PASSWORD, DEMO_PEOPLE, DEMO_PROJECTS } from './demoScenario'
import type { Sequelize } from 'sequelize'

/** Seed the demo lab into an already-migrated database; returns false when it was there already. */
export async function seedDemoLab(sequelize: Sequelize): Promise<boolean> {
  const { Lab, User, Membership, Project, Sample } = defineModels(sequelize)
  if (await Lab.findOne({ where: { name: DEMO_LAB.name } })) return false
  const passwordHash = await hashPassword(DEMO_PASSWORD)
  await sequelize.transaction(async (transaction) => {
    const lab = await Lab.create(DEMO_LAB, { transaction })
    const people = []
    for (const person of DEMO_PEOPLE) {
      const [user] = await User.findOrCreate({ where: { email: person.email }, defaults: { email: person.email, name: person.name, passwordHash, lockedUntil: null }, transaction })
      await Membership.create({ labId: lab.id, userId: user.id, role: person.role }, { transaction })
      people.push(user)
    }
    const pi = people[DEMO_PEOPLE.findIndex((p) => p.role === 'pi')]
    for (const p of DEMO_PROJECTS) {
      const project = await Project.create({ labId: lab.id, name: p.name, description: p.description, createdById: pi.id, deletedAt: null }, { transaction })
      for (const s of p.samples) await Sample.create({ projectId: project.id, ...s }, { transaction })
    }
  })
  return true
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const sequelize = createSequelize(loadConfig().databaseUrl)
  try {
    console.log((await seedDemoLab(sequelize)) ? '[seed] demo lab created' : '[seed] demo lab already present')
  } finally {
    await sequelize.close()
  }
}
