/**
 * Cross-checks the database against the object store after crashes: objects no row refers to (an upload or mask
 * save killed between storing and committing), rows whose objects are missing, and images whose frame rows are
 * incomplete. With `fix`, orphaned objects older than `minAgeMinutes` are removed (younger ones may belong to an
 * upload in progress); missing objects are only reported, since nothing can bring them back but a restore.
 */
import type { Sequelize } from 'sequelize'
import { Annotation, Frame, Image, StackFrameResult } from '../models'
import type { ObjectStore } from '../storage/objectStore'
import { frameObjectKey } from './imageService'

export interface ConsistencyReport {
  objectsChecked: number
  orphanedObjects: string[]
  removedObjects: string[]
  missingObjects: { key: string; owner: string }[]
  incompleteImages: { imageId: number; expectedFrames: number; frameRows: number }[]
}

export async function checkConsistency(deps: { sequelize: Sequelize; store: ObjectStore }, options: { fix?: boolean; minAgeMinutes?: number } = {}): Promise<ConsistencyReport> {
  const { store } = deps
  const minAge = (options.minAgeMinutes ?? 30) * 60_000
  const objects = await store.listDetailed()
  const existing = new Set(objects.map((o) => o.key))
  const referenced = new Map<string, string>()

  // Soft-deleted images keep their objects until the hard delete, so they count as references too.
  const images = await Image.findAll({ attributes: ['id', 'objectKey', 'frameCount'], paranoid: false })
  const frameCounts = await Frame.count({ group: ['imageId'] })
  const countFor = new Map((frameCounts as unknown as { imageId: number; count: number }[]).map((r) => [r.imageId, Number(r.count)]))
  const incompleteImages: ConsistencyReport['incompleteImages'] = []
  for (const image of images) {
    referenced.set(image.objectKey, `image ${image.id} original`)
    for (let i = 0; i < image.frameCount; i++) {
      for (const kind of ['preview.png', 'thumbnail.png', 'pixels.bin'] as const) referenced.set(frameObjectKey(image, i, kind), `image ${image.id} frame ${i} ${kind}`)
    }
    const rows = countFor.get(image.id) ?? 0
    if (rows !== image.frameCount) incompleteImages.push({ imageId: image.id, expectedFrames: image.frameCount, frameRows: rows })
  }
  for (const a of await Annotation.findAll({ attributes: ['id', 'maskKey'] })) referenced.set(a.maskKey, `annotation ${a.id}`)
  for (const r of await StackFrameResult.findAll({ attributes: ['id', 'maskKey'] })) if (r.maskKey) referenced.set(r.maskKey, `stack frame result ${r.id}`)

  const now = Date.now()
  const orphanedObjects = objects.filter((o) => !referenced.has(o.key) && now - o.lastModified.getTime() >= minAge).map((o) => o.key)
  const missingObjects = [...referenced].filter(([key]) => !existing.has(key)).map(([key, owner]) => ({ key, owner }))
  const removedObjects: string[] = []
  if (options.fix) {
    for (const key of orphanedObjects) {
      await store.remove(key)
      removedObjects.push(key)
    }
  }
  return { objectsChecked: objects.length, orphanedObjects, removedObjects, missingObjects, incompleteImages }
}
