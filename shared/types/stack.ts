import type { FrameMeasurements } from '../analysis/analyzeFrame'
import type { AnalysisRecipe } from '../analysis/recipe'
import type { CurieSummary, LoopSummary } from '../analysis/analyzeStack'

export type StackRunStatus = 'queued' | 'running' | 'done' | 'done-with-errors' | 'failed'

export interface StackRunDto {
  id: number
  imageId: number
  recipe: AnalysisRecipe
  engineVersion: string
  status: StackRunStatus
  framesTotal: number
  framesDone: number
  threshold: number | null
  error: string | null
  createdAt: string
  startedAt: string | null
  finishedAt: string | null
}

export interface StackFrameResultDto {
  index: number
  field: number | null
  fieldUnit: string | null
  temperatureK: number | null
  measurements: FrameMeasurements | null
  error: string | null
}

/** A worker process that measured frames of a run (its owner, or a worker that joined it). */
export interface StackRunWorkerDto {
  /** host:pid of the worker process. */
  name: string
  frames: number
  /** True for the worker that took the run (it computed the threshold and writes the summary). */
  owner: boolean
}

export interface StackRunDetailDto extends StackRunDto {
  frames: StackFrameResultDto[]
  /** Who measured the frames, most frames first (empty for a run that no worker has started). */
  workers: StackRunWorkerDto[]
  loop: LoopSummary | null
  curie: CurieSummary | null
}
