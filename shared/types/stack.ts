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

export interface StackRunDetailDto extends StackRunDto {
  frames: StackFrameResultDto[]
  loop: LoopSummary | null
  curie: CurieSummary | null
}
