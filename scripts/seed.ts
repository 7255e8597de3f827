/**
 * `npm run db:seed`: create the demo lab once (people, roles, projects, samples), then upload the generated demo images
 * through the same service code as the upload page, and give the review desk work: two remanent frames segmented,
 * saved and submitted by the annotator, one of them approved by the reviewer. Running it again changes nothing.
 */
import { readFileSync, statSync } from 'node:fs'
import { fileURLToPath, pathToFileURL } from 'node:url'
import { loadConfig } from '../server/config'
import { createDeps } from '../server/runtime'
import { defineModels } from '../server/models'
import { hashPassword } from '../server/auth/passwords'
import { loadSessionUser } from '../server/auth/sessionUser'
import { createImageService } from '../server/services/imageService'
import { createAnnotationService } from '../server/services/annotationService'
import { createReviewService } from '../server/services/reviewService'
import type { AppDeps } from '../server/app'
import { analyzeFrame } from '../shared/analysis/analyzeFrame'
import { DEFAULT_RECIPE } from '../shared/analysis/recipe'
import { decodeFrame } from '../shared/imageio/decodeImage'
import { DEMO_IMAGES, DEMO_LAB, DEMO_PASSWORD, DEMO_PEOPLE, DEMO_PROJECTS, DEMO_REVIEWS } from './demoScenario'

const SAMPLES_DIR = fileURLToPath(new URL('../samples/', import.meta.url))

/** Seed the demo lab into an already-migrated database; returns false when it was there already. */
export async function seedDemoLab(deps: AppDeps): Promise<boolean> {
  const { sequelize } = deps
  const { Lab, User, Membership, Project, Sample } = defineModels(sequelize)
  const existing = await Lab.findOne({ where: { name: DEMO_LAB.name } })
  if (existing) {
    // Images are checked every time: an interrupted first seed finishes here (uploads of the same bytes are no-ops).
    await seedDemoImages(deps, existing.id)
    await seedDemoReviews(deps, existing.id)
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
  await seedDemoReviews(deps, labId)
  return true
}

async function seedDemoImages(deps: AppDeps, labId: number): Promise<void> {
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

/**
 * The annotator's work on the frames of DEMO_REVIEWS, through the same services as the workspace and the review desk:
 * the frame segmented with the default recipe (the workspace's automatic segmentation, here on the sample file's own
 * pixels), saved as version 1, submitted, and approved where the scenario says so. A frame that has a saved version
 * already is left alone.
 */
async function seedDemoReviews(deps: AppDeps, labId: number): Promise<void> {
  const { User, Project, Image, Frame, Annotation } = defineModels(deps.sequelize)
  const person = async (role: string) => (await loadSessionUser((await User.findOne({ where: { email: DEMO_PEOPLE.find((p) => p.role === role)!.email } }))!.id))!
  const annotator = await person('annotator')
  const reviewer = await person('reviewer')
  const annotations = createAnnotationService(deps)
  const reviews = createReviewService(deps)
  const projectIds = (await Project.findAll({ attributes: ['id'], where: { labId } })).map((p) => p.id)
  for (const demo of DEMO_REVIEWS) {
    const image = await Image.findOne({ where: { name: demo.file, projectId: projectIds, deletedAt: null } })
    if (!image) continue
    const frame = (await Frame.findOne({ where: { imageId: image.id, index: 0 } }))!
    if ((await Annotation.count({ where: { frameId: frame.id, state: 'saved' } })) > 0) continue
    const pixels = await decodeFrame(new Uint8Array(readFileSync(SAMPLES_DIR + demo.file)), demo.file, 0)
    const { mask } = analyzeFrame(pixels, DEFAULT_RECIPE, { pixelSizeNm: image.pixelSizeNm })
    const saved = await annotations.save(annotator, frame.id, { baseVersion: null, mask, shapes: [], recipe: DEFAULT_RECIPE })
    await reviews.transition(annotator, saved.analysis.id, 'submit', demo.submitNote)
    if (demo.approveNote) await reviews.transition(reviewer, saved.analysis.id, 'approve', demo.approveNote)
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
