/** Comparing samples and anneal conditions: compute, save a view for the lab, list, re-compute, delete. */
import { z } from 'zod'
import { apiRoute, type ApiDefinition } from '../openapi/apiRoute'
import { currentUser } from '../auth/guards'
import { COMPARISON_GROUP_BY, COMPARISON_MEASURES } from '../../shared/types/comparison'
import type { ComparisonService } from '../services/comparisonService'

const QuerySchema = z
  .object({
    sampleIds: z.array(z.number().int().positive()).min(1).max(500).optional(),
    projectId: z.number().int().positive().optional(),
    measure: z.enum(COMPARISON_MEASURES),
    groupBy: z.enum(COMPARISON_GROUP_BY),
    /** Default false: only approved analyses, and stack runs that finished 'done', count. */
    includeDrafts: z.boolean().default(false),
  })
  .refine((q) => (q.sampleIds === undefined) !== (q.projectId === undefined), { message: 'Give either sampleIds or projectId.', path: ['sampleIds'] })
const GroupKeySchema = z.union([z.number(), z.string()]).nullable()
const ValueSchema = z.object({
  value: z.number(),
  source: z.enum(['analysis', 'stack-run', 'motion']),
  draft: z.boolean(),
  sample: z.object({ id: z.number().int(), name: z.string() }),
  image: z.object({ id: z.number().int(), name: z.string() }).nullable().describe('null for a value of the whole sample (creep slope)'),
  frameId: z.number().int().nullable(),
  frameIndex: z.number().int().nullable(),
  analysisId: z.number().int().nullable(),
  stackRunId: z.number().int().nullable(),
  creepFit: z
    .object({
      slopeStdErr: z.number().nullable(),
      series: z.array(z.object({ id: z.number().int(), name: z.string() })),
      steps: z.number().int(),
      usedSteps: z.number().int(),
      creepFieldRangeMT: z.tuple([z.number(), z.number()]).nullable().describe('mT'),
    })
    .nullable()
    .describe('creep slope only: the pooled fit of the sample’s motion series'),
})
const GroupSchema = z.object({
  key: GroupKeySchema,
  label: z.string(),
  samples: z.array(z.object({ id: z.number().int(), name: z.string() })),
  n: z.number().int(),
  mean: z.number().nullable(),
  standardDeviation: z.number().nullable(),
  ci: z.object({ lower: z.number().nullable(), upper: z.number().nullable(), level: z.number(), resamples: z.number().int(), seed: z.number().int() }),
  fiveNumber: z.object({ min: z.number(), q1: z.number(), median: z.number(), q3: z.number(), max: z.number() }).nullable(),
  hasDrafts: z.boolean(),
  values: z.array(ValueSchema),
})
const PairSchema = z.object({
  groupA: GroupKeySchema,
  groupB: GroupKeySchema,
  labelA: z.string(),
  labelB: z.string(),
  welch: z.object({ t: z.number().nullable(), df: z.number().nullable(), p: z.number().nullable(), meanDifference: z.number().nullable() }),
  mannWhitney: z.object({ u: z.number().nullable(), z: z.number().nullable(), p: z.number().nullable() }),
  hedgesG: z.number().nullable(),
  rankBiserial: z.number().nullable(),
})
const ResultSchema = z.object({
  measure: z.enum(COMPARISON_MEASURES),
  label: z.string(),
  unit: z.string(),
  groupBy: z.enum(COMPARISON_GROUP_BY),
  groupByLabel: z.string(),
  includeDrafts: z.boolean(),
  labId: z.number().int(),
  groups: z.array(GroupSchema),
  pairs: z.array(PairSchema),
  excluded: z.object({
    uncalibrated: z.number().int(),
    noSample: z.number().int(),
    notAtRemanence: z.number().int(),
    missing: z.number().int(),
    noMotionSeries: z.number().int(),
    noCreepFit: z.number().int(),
  }),
  notes: z.array(z.string()),
})
const SavedSchema = z.object({
  id: z.number().int(),
  labId: z.number().int(),
  name: z.string(),
  query: z.record(z.string(), z.unknown()),
  createdBy: z.object({ id: z.number().int(), name: z.string() }).nullable(),
  createdAt: z.string(),
})
const idParams = z.object({ comparisonId: z.coerce.number().int().positive() })

export function registerComparisonRoutes(api: ApiDefinition, comparisons: ComparisonService): void {
  apiRoute(api, {
    method: 'post',
    path: '/comparisons/compute',
    summary:
      'Compare a measure across samples grouped by an anneal parameter: per group the values, n, mean, SD, bootstrap 95 % CI (fixed seed), five-number summary; pairwise Welch t, Mann–Whitney U, Hedges g, rank-biserial. Only approved work counts unless includeDrafts. The creep slope is one value per sample (its motion series pooled in one creep fit, μ = 1/4)',
    tags: ['comparisons'],
    access: 'signed-in',
    body: QuerySchema,
    responses: { 200: { description: 'The comparison', schema: ResultSchema }, 403: { description: 'Role may not compare' }, 404: { description: 'No such sample or project' } },
    handler: (req, _res, { body }) => comparisons.compute(currentUser(req), body),
  })

  apiRoute(api, {
    method: 'post',
    path: '/comparisons',
    summary: 'Save a comparison view for the lab (name + query); it is re-computed from current data whenever opened',
    tags: ['comparisons'],
    access: 'signed-in',
    body: z.object({ name: z.string().trim().min(1).max(200), query: QuerySchema }),
    responses: { 201: { description: 'Saved', schema: SavedSchema }, 403: { description: 'Role may not compare' }, 404: { description: 'No such sample or project' } },
    handler: async (req, res, { body }) => res.status(201).json(await comparisons.save(currentUser(req), body)),
  })

  apiRoute(api, {
    method: 'get',
    path: '/comparisons',
    summary: 'Saved comparison views of the person\u2019s labs (optionally one lab), newest first',
    tags: ['comparisons'],
    access: 'signed-in',
    query: z.object({ labId: z.coerce.number().int().positive().optional() }),
    responses: { 200: { description: 'Saved views', schema: z.array(SavedSchema) } },
    handler: (req, _res, { query }) => comparisons.list(currentUser(req), query.labId),
  })

  apiRoute(api, {
    method: 'get',
    path: '/comparisons/:comparisonId',
    summary: 'A saved comparison view and its result, re-computed from the current data',
    tags: ['comparisons'],
    access: 'signed-in',
    params: idParams,
    responses: { 200: { description: 'The view and result', schema: z.object({ comparison: SavedSchema, result: ResultSchema }) }, 404: { description: 'No such comparison' } },
    handler: (req, _res, { params }) => comparisons.get(currentUser(req), params.comparisonId),
  })

  apiRoute(api, {
    method: 'delete',
    path: '/comparisons/:comparisonId',
    summary: 'Delete a saved comparison view (its creator or a lab manager)',
    tags: ['comparisons'],
    access: 'signed-in',
    params: idParams,
    responses: { 204: { description: 'Deleted' }, 403: { description: 'Neither creator nor lab manager' }, 404: { description: 'No such comparison' } },
    handler: async (req, res, { params }) => {
      await comparisons.remove(currentUser(req), params.comparisonId)
      res.status(204).end()
    },
  })
}
