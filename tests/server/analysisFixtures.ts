/**
 * Fixtures for the review, comparison and export tests, made the way a lab makes them: a TIFF uploaded through the
 * API, then for each frame the automatically segmented mask saved through POST /api/frames/:frameId/annotations (which
 * computes the measurements in the server's worker pool and stores a draft analysis).
 */
import { expect } from 'vitest'
import type request from 'supertest'
import { encodeTiff } from '../../shared/imageio/encodeTiff'
import { maskToBase64 } from '../../shared/imageio/maskEncoding'
import { analyzeFrame } from '../../shared/analysis/analyzeFrame'
import { normalizeRecipe } from '../../shared/analysis/recipe'
import type { GrayImage } from '../../shared/analysis/types'
import { Frame } from '../../server/models'

export interface Session {
  agent: ReturnType<typeof request.agent>
  csrf: string
}

export const FIXTURE_RECIPE = normalizeRecipe({ smoothingSigma: 1, minDomainArea: 9 })

/** Upload `frames` as one TIFF (with a frames CSV when `fieldsMT` is given); returns the image id and frame ids. */
export async function uploadImage(uploader: Session, projectId: number, input: { name: string; frames: GrayImage[]; pixelSizeNm: number | null; sampleId?: number; fieldsMT?: number[] }) {
  let req = uploader.agent
    .post(`/api/projects/${projectId}/images`)
    .set('x-csrf-token', uploader.csrf)
    .attach('files', Buffer.from(encodeTiff(input.frames, input.pixelSizeNm ? { pixelSizeNm: input.pixelSizeNm } : {})), input.name)
  if (input.sampleId) req = req.field('sampleId', String(input.sampleId))
  if (input.fieldsMT) req = req.attach('frames', Buffer.from('frame,field_mT\n' + input.fieldsMT.map((f, i) => `${i},${f}`).join('\n')), `${input.name}.csv`)
  const res = await req
  expect(res.status, JSON.stringify(res.body)).toBe(201)
  const imageId = res.body[0].id as number
  const frames = await Frame.findAll({ where: { imageId }, order: [['index', 'ASC']] })
  return { imageId, frameIds: frames.map((f) => f.id) }
}

/** Save the automatic mask of `frame` as the next version; returns the new analysis (draft) from the answer. */
export async function saveAutoMask(annotator: Session, frameId: number, frame: GrayImage, pixelSizeNm: number | null, baseVersion: number | null = null) {
  const { mask } = analyzeFrame(frame, FIXTURE_RECIPE, { pixelSizeNm })
  const res = await annotator.agent.post(`/api/frames/${frameId}/annotations`).set('x-csrf-token', annotator.csrf).send({ baseVersion, mask: maskToBase64(mask), shapes: [], recipe: FIXTURE_RECIPE })
  expect(res.status, JSON.stringify(res.body)).toBe(201)
  return res.body.analysis as { id: number; status: string; measurements: Record<string, number | null>; engineVersion: string }
}

/** Submit as `submitter` and approve as `reviewer`, checking both answers. */
export async function submitAndApprove(submitter: Session, reviewer: Session, analysisId: number) {
  const submitted = await submitter.agent.post(`/api/analyses/${analysisId}/submit`).set('x-csrf-token', submitter.csrf).send({})
  expect(submitted.status, JSON.stringify(submitted.body)).toBe(200)
  const approved = await reviewer.agent.post(`/api/analyses/${analysisId}/approve`).set('x-csrf-token', reviewer.csrf).send({})
  expect(approved.status, JSON.stringify(approved.body)).toBe(200)
  return approved.body as { approvedAt: string }
}
