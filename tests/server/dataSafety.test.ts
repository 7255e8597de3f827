/**
 * Data safety: the consistency check finds (and with --fix removes) objects that no row refers to, as left by a
 * process killed between storing an object and committing its row; backup → wipe → restore gives back every image
 * byte for byte (SHA-256) and every measurement.
 */
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { createHash } from 'node:crypto'
import { mkdtempSync, rmSync } from 'node:fs'
import { tmpdir } from 'node:os'
import path from 'node:path'
import { createLabWithRoles, signIn, startTestApp } from './testApp'
import { encodeTiff } from '../../shared/imageio/encodeTiff'
import { maskToBase64 } from '../../shared/imageio/maskEncoding'
import { renderLabyrinth } from '../../scripts/sampleImages'
import { checkConsistency } from '../../server/services/consistencyService'
import { backup, restore } from '../../server/services/backupService'
import { Analysis, Frame, Image } from '../../server/models'

describe('data safety', () => {
  let ctx: ReturnType<typeof startTestApp>
  let imageId: number
  const work = mkdtempSync(path.join(tmpdir(), 'remanence-backup-'))

  beforeAll(async () => {
    ctx = startTestApp()
    await ctx.deps.store.ensureBucket()
    const lab = await createLabWithRoles('Safety')
    const microscopist = await signIn(ctx.app, lab.people.microscopist.email)
    const frame = renderLabyrinth({ size: 128, periodPx: 16, seed: 3 }).image
    const up = await microscopist.agent.post(`/api/projects/${lab.project.id}/images`).set('x-csrf-token', microscopist.csrf).attach('files', Buffer.from(encodeTiff([frame], { pixelSizeNm: 50 })), 'safety.tif')
    imageId = up.body[0].id
    const annotator = await signIn(ctx.app, lab.people.annotator.email)
    const frameId = (await Frame.findOne({ where: { imageId } }))!.id
    const mask = { width: 128, height: 128, data: Uint8Array.from({ length: 128 * 128 }, (_, i) => ((i % 128) >> 4) & 1) }
    const saved = await annotator.agent.post(`/api/frames/${frameId}/annotations`).set('x-csrf-token', annotator.csrf).send({ baseVersion: null, mask: maskToBase64(mask), shapes: [], recipe: {} })
    expect(saved.status).toBe(201)
  })
  afterAll(async () => {
    rmSync(work, { recursive: true, force: true })
    await ctx.stop()
  })

  it('When an object has no row (a crash between store and commit), then the check lists it and --fix removes it; referenced objects stay', async () => {
    const clean = await checkConsistency(ctx.deps, { minAgeMinutes: 0 })
    expect(clean.orphanedObjects).toEqual([])
    expect(clean.missingObjects).toEqual([])
    expect(clean.incompleteImages).toEqual([])
    await ctx.deps.store.put('labs/999/images/orphan/original.tif', Buffer.from('half an upload'), 'image/tiff')
    const found = await checkConsistency(ctx.deps, { minAgeMinutes: 0 })
    expect(found.orphanedObjects).toEqual(['labs/999/images/orphan/original.tif'])
    const young = await checkConsistency(ctx.deps, { minAgeMinutes: 30 })
    expect(young.orphanedObjects).toEqual([]) // an upload in progress is not touched
    const fixed = await checkConsistency(ctx.deps, { minAgeMinutes: 0, fix: true })
    expect(fixed.removedObjects).toEqual(['labs/999/images/orphan/original.tif'])
    expect((await checkConsistency(ctx.deps, { minAgeMinutes: 0 })).orphanedObjects).toEqual([])
    expect(clean.objectsChecked).toBeGreaterThanOrEqual(5)
  })

  it('When an object a row needs is gone, then the check reports it as missing with its owner', async () => {
    const image = (await Image.findByPk(imageId))!
    const key = image.objectKey.replace(/original\.tif$/, 'frames/0/thumbnail.png')
    const body = await ctx.deps.store.get(key)
    await ctx.deps.store.remove(key)
    const report = await checkConsistency(ctx.deps, { minAgeMinutes: 0 })
    expect(report.missingObjects).toEqual([{ key, owner: `image ${imageId} frame 0 thumbnail.png` }])
    await ctx.deps.store.put(key, body, 'image/png')
  })

  it('When backed up, wiped and restored, then every image matches its SHA-256 and every measurement is back', async () => {
    const databaseUrl = inject('databaseUrl')
    const before = {
      images: (await Image.findAll({ order: [['id', 'ASC']] })).map((i) => ({ id: i.id, sha256: i.sha256, key: i.objectKey })),
      analyses: (await Analysis.findAll({ order: [['id', 'ASC']] })).map((a) => ({ id: a.id, results: a.results })),
    }
    expect(before.images.length).toBeGreaterThan(0)
    const folder = path.join(work, 'backup')
    const manifest = await backup({ databaseUrl, store: ctx.deps.store }, folder)
    expect(manifest.objects.length).toBe((await ctx.deps.store.list()).length)

    // wipe: every object and every table
    const keys = await ctx.deps.store.list()
    for (let i = 0; i < keys.length; i += 50) await Promise.all(keys.slice(i, i + 50).map((key) => ctx.deps.store.remove(key)))
    await ctx.deps.sequelize.query('TRUNCATE images, analyses, annotations, frames CASCADE')
    expect(await Image.count()).toBe(0)

    await restore({ databaseUrl, store: ctx.deps.store }, folder)
    const images = await Image.findAll({ order: [['id', 'ASC']] })
    expect(images.map((i) => ({ id: i.id, sha256: i.sha256, key: i.objectKey }))).toEqual(before.images)
    for (const image of images) {
      const bytes = await ctx.deps.store.get(image.objectKey)
      expect(createHash('sha256').update(bytes).digest('hex')).toBe(image.sha256)
    }
    const analyses = (await Analysis.findAll({ order: [['id', 'ASC']] })).map((a) => ({ id: a.id, results: a.results }))
    expect(analyses).toEqual(before.analyses)
  }, 180_000) // the bucket holds what every server test before this file stored (about 2,400 objects), copied twice


  it('When the backup is damaged, then restore refuses before touching anything', async () => {
    const folder = path.join(work, 'damaged')
    const manifest = await backup({ databaseUrl: inject('databaseUrl'), store: ctx.deps.store }, folder)
    const { writeFileSync } = await import('node:fs')
    writeFileSync(path.join(folder, manifest.objects[0].file), 'tampered')
    const count = await Image.count()
    await expect(restore({ databaseUrl: inject('databaseUrl'), store: ctx.deps.store }, folder)).rejects.toThrow(/checksum/)
    expect(await Image.count()).toBe(count)
  }, 180_000)
})
