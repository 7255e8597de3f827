/** Stack runs: start one for an image, list an image's runs, read a run's progress and results, and its frame masks. */
import type { AnalysisRecipe } from '@shared/analysis/recipe'
import type { BinaryMask } from '@shared/analysis/types'
import { maskFromBase64 } from '@shared/imageio/maskEncoding'
import type { StackRunDetailDto, StackRunDto } from '@shared/types/stack'
import { http } from './http'

/** Queue a run of every frame with `recipe` (missing parameters take the defaults); needs `analysis.run`. */
export function startStackRun(imageId: number, recipe: Partial<AnalysisRecipe>): Promise<StackRunDto> {
  return http.post<StackRunDto>(`/images/${imageId}/stack-runs`, { recipe })
}

/** An image's runs, newest first. */
export function listStackRuns(imageId: number): Promise<StackRunDto[]> {
  return http.get<StackRunDto[]>(`/images/${imageId}/stack-runs`)
}

export function getStackRun(runId: number): Promise<StackRunDetailDto> {
  return http.get<StackRunDetailDto>(`/stack-runs/${runId}`)
}

/** The domain mask the run made for one frame (decoded from the RMSK run-length encoding). */
export async function getStackRunMask(runId: number, index: number): Promise<BinaryMask> {
  const { mask } = await http.get<{ mask: string }>(`/stack-runs/${runId}/frames/${index}/mask`)
  return maskFromBase64(mask)
}
