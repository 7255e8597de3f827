import { z } from 'zod'
import { apiRoute, type ApiDefinition } from '../openapi/apiRoute'
import { currentUser } from '../auth/guards'
import { BACKGROUND_MODES, CLEANUP_MODES, DENOISE_MODES, SEGMENTATION_METHODS } from '../../shared/analysis/recipe'
import type { MotionRecipeInput, MotionService } from '../services/motionService'

const flag = z.enum(['true', 'false'])

/** The recipe as query fields (all optional: motion defaults fill the rest), and the creep exponent options. */
const MotionQuery = z.object({
  method: z.enum(SEGMENTATION_METHODS).optional(),
  kmeansClasses: z.coerce.number().pipe(z.union([z.literal(2), z.literal(3)])).optional(),
  background: z.enum(BACKGROUND_MODES).optional(),
  flattenSigma: z.coerce.number().min(2).max(500).optional(),
  referenceFrame: z.coerce.number().int().min(0).optional(),
  denoise: z.enum(DENOISE_MODES).optional(),
  smoothingSigma: z.coerce.number().min(0).max(20).optional(),
  cleanup: z.enum(CLEANUP_MODES).optional(),
  fillHoles: flag.optional(),
  minDomainArea: z.coerce.number().int().min(0).max(1_000_000).optional(),
  stackThreshold: z.enum(['stack-wide', 'per-frame']).optional(),
  /** Creep exponent μ when not fitted (default 1/4). */
  mu: z.coerce.number().positive().max(2).optional(),
  fitMu: flag.optional(),
})

type Query = z.infer<typeof MotionQuery>

function recipeOf(query: Query): MotionRecipeInput {
  // mu and fitMu are creep options, not recipe fields: left out of `rest`.
  const { mu, fitMu, fillHoles, ...rest } = query
  return { ...rest, ...(fillHoles !== undefined ? { fillHoles: fillHoles === 'true' } : {}) }
}

function creepOptions(query: Query): { mu?: number; fitMu?: boolean } {
  return { ...(query.mu !== undefined ? { mu: query.mu } : {}), ...(query.fitMu !== undefined ? { fitMu: query.fitMu === 'true' } : {}) }
}

const Step = z.object({
  fromFrame: z.number().int(),
  toFrame: z.number().int(),
  field: z.number().nullable(),
  fieldUnit: z.string().nullable(),
  fieldMT: z.number().nullable(),
  duration: z.number().describe('s'),
  displacementPx: z.number(),
  displacementStdErrPx: z.number().nullable(),
  displacementNm: z.number().nullable(),
  velocity: z.number(),
  velocityStdErr: z.number().nullable(),
  velocityUnit: z.enum(['m/s', 'px/s']),
  local: z.record(z.string(), z.unknown()),
  sectors: z.array(z.object({ angleDeg: z.number(), meanPx: z.number().nullable(), count: z.number().int() })),
})
const Creep = z.object({
  mu: z.number(),
  muStdErr: z.number().nullable(),
  slope: z.number(),
  slopeStdErr: z.number().nullable(),
  lnV0: z.number(),
  lnV0StdErr: z.number().nullable(),
  v0: z.number().nullable(),
  fieldUnit: z.string().nullable(),
  velocityUnit: z.enum(['m/s', 'px/s']),
  depinningField: z.number().nullable(),
  depinningBracket: z.tuple([z.number(), z.number()]).nullable(),
  flow: z.record(z.string(), z.unknown()).nullable(),
  usedPoints: z.number().int(),
})
const Motion = z.object({
  phase: z.union([z.literal(0), z.literal(1)]),
  frames: z.number().int(),
  pixelSizeNm: z.number().nullable(),
  fieldUnit: z.string().nullable(),
  velocityUnit: z.enum(['m/s', 'px/s']),
  steps: z.array(Step),
  creep: Creep.nullable(),
  roughness: z
    .object({ zeta: z.number().nullable(), zetaStdErr: z.number().nullable(), boxDimension: z.number().nullable(), r: z.array(z.number()), B: z.array(z.number()), theory: z.object({ zeta: z.number(), source: z.string() }) })
    .nullable(),
  notes: z.array(z.string()),
  threshold: z.number().nullable(),
  registration: z.array(z.object({ frame: z.number().int(), dx: z.number(), dy: z.number(), peak: z.number(), applied: z.boolean() })),
})
const ImageMotion = z.object({
  imageId: z.number().int(),
  imageName: z.string(),
  sample: z.object({ id: z.number().int(), name: z.string() }).nullable(),
  engineVersion: z.string(),
  recipe: z.record(z.string(), z.unknown()),
  motion: Motion,
})
const SampleMotion = z.object({
  sample: z.object({ id: z.number().int(), name: z.string(), annealTemperatureC: z.number().nullable() }),
  engineVersion: z.string(),
  series: z.array(z.object({ imageId: z.number().int(), imageName: z.string(), recipe: z.record(z.string(), z.unknown()).nullable(), motion: Motion.nullable(), error: z.object({ code: z.string(), message: z.string() }).nullable() })),
  points: z.array(z.object({ imageId: z.number().int(), imageName: z.string(), fromFrame: z.number().int(), toFrame: z.number().int(), fieldMT: z.number(), velocity: z.number(), velocityStdErr: z.number().nullable(), velocityUnit: z.enum(['m/s', 'px/s']) })),
  velocityUnit: z.enum(['m/s', 'px/s']).nullable(),
  creep: Creep.nullable(),
  notes: z.array(z.string()),
})

export function registerMotionRoutes(api: ApiDefinition, motion: MotionService): void {
  apiRoute(api, {
    method: 'get',
    path: '/images/:imageId/motion',
    summary:
      'Wall motion of a pulsed-field (or timed) series: velocity per step (ΔA/L̄ over the pulse duration) with local displacements by direction, the creep-law fit (μ = 1/4 by default) and the wall roughness (ζ, box-counting dimension). Recipe fields as query parameters.',
    tags: ['motion'],
    access: 'signed-in',
    params: z.object({ imageId: z.coerce.number().int().positive() }),
    query: MotionQuery,
    responses: {
      200: { description: 'The motion analysis', schema: ImageMotion },
      400: { description: 'Not a motion series, a bad recipe, or rows the analysis refuses' },
      404: { description: 'No such image' },
    },
    handler: (req, _res, { params, query }) => motion.forImage(currentUser(req), params.imageId, recipeOf(query), creepOptions(query)),
  })
  apiRoute(api, {
    method: 'get',
    path: '/samples/:sampleId/motion',
    summary: 'Every motion series of a sample with the v(H) points pooled (μ0H in mT) and one creep-law fit across them',
    tags: ['motion'],
    access: 'signed-in',
    params: z.object({ sampleId: z.coerce.number().int().positive() }),
    query: MotionQuery,
    responses: { 200: { description: 'The sample’s motion series and pooled fit', schema: SampleMotion }, 404: { description: 'No such sample' } },
    handler: (req, _res, { params, query }) => motion.forSample(currentUser(req), params.sampleId, recipeOf(query), creepOptions(query)),
  })
}
