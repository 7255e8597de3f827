/**
 * `npm run db:seed`: create the demo lab once (people, roles, projects, samples), then upload the generated demo images
 * through the same service code as the upload page. Running it again changes nothing.
 */
import { statSync } from 'node:fs'
import { fileURLToPath, pathToFileURL } from 'node:url'
import { loadConfig } from '../server/config'
import { createDeps } from '../server/runtime'
import { defineModels } from '../server/models'
import { hashPassword } from '../server/auth/passwords'
import { loadSessionUser } from '../server/auth/sessionUser'
import { createImageService, type ImageServiceDeps } from '../server/services/imageService'
import { DEMO_IMAGES, DEMO_LAB, DEMO_PASSWORD, DEMO_PEOPLE, DEMO_PROJECTS } from './demoScenario'

const SAMPLES_DIR = fileURLToPath(new URL('../samples/', import.meta.url))

/** Seed the demo lab into an already-migrated database; returns false when it was there already. */
export async function seedDemoLab(deps: ImageServiceDeps): Promise<boolean> {
  const { sequelize } = deps
  const { Lab, User, Membership, Project, Sample } = defineModels(sequelize)
  const existing = await Lab.findOne({ where: { name: DEMO_LAB.name } })
  if (existing) {
    // Images are checked every time: an interrupted first seed finishes here (uploads of the same bytes are no-ops).
    await seedDemoImages(deps, existing.id)
    return false
  }
  const passwordHash = await hashPassword(DEMO_PASSWORD)
  const labId = await sequelize.transaction(async (transaction) => {
    const lab = await Lab.create(DEMO_LAB, { transaction })
    const ids: Record<string, number> = {}
    for (const person of DEMO_PEOPLE) {
      const [user] = await User.findOrCreate({ where: { email: person.email }, defaults: { email: person.email, name: person.name, passwordHash, lockedUntil: null }, transaction })
      await Membership.create({ labId: lab.id, userId: user.id, role: person.role }, { transaction })
      ids[person.role] = user.id
    }
    for (const p of DEMO_PROJECTS) {
      const project = await Project.create({ labId: lab.id, name: p.name, description: p.description, createdById: ids.pi, deletedAt: null }, { transaction })
      for (const s of p.samples) await Sample.create({ projectId: project.id, ...s }, { transaction })
    }
    return lab.id
  })
  await seedDemoImages(deps, labId)
  return true
}

async function seedDemoImages(deps: ImageServiceDeps, labId: number): Promise<void> {
  const { User, Project, Sample, Frame } = defineModels(deps.sequelize)
  const personId = async (role: string) => (await User.findOne({ where: { email: DEMO_PEOPLE.find((p) => p.role === role)!.email } }))!.id
  const microscopistId = await personId('microscopist')
  const annotatorId = await personId('annotator')

  // The images go in through the upload service, as the microscopist, exactly like the upload page does.
  const microscopist = (await loadSessionUser(microscopistId))!
  const images = createImageService(deps)
  const projects = await Project.findAll({ where: { labId } })
  for (const demo of DEMO_IMAGES) {
    const sample = await Sample.findOne({ where: { name: demo.sample, projectId: projects.map((p) => p.id) } })
    if (!sample) throw new Error(`demo scenario: no sample named ${demo.sample}`)
    const file = (name: string) => ({ originalName: name, path: SAMPLES_DIR + name, size: statSync(SAMPLES_DIR + name).size })
    const [uploaded] = await images.upload(microscopist, sample.projectId, [file(demo.file)], demo.frames ? file(demo.frames) : undefined, {
      sampleId: sample.id,
      technique: demo.technique,
      notes: demo.notes,
      acquiredAt: new Date(demo.acquiredAt),
    })
    // The annotator's queue: every remanent frame is assigned to them.
    if (demo.file.endsWith('_remanent.tif') && !uploaded.duplicateOf) await Frame.update({ assigneeId: annotatorId }, { where: { imageId: uploaded.id } })
  }
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  const deps = createDeps(loadConfig())
  try {
    await deps.store.ensureBucket()
    console.log((await seedDemoLab(deps)) ? '[seed] demo lab created' : '[seed] demo lab already present')
  } finally {
    await deps.dispose()
  }
}
