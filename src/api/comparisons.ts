/** Comparisons across samples and anneal conditions: compute, and saved views shared in the lab. */
import type { ComparisonQuery, ComparisonResultDto, SavedComparisonDto } from '@shared/types/comparison'
import { http } from './http'

/** Compute a comparison from the current data; needs `comparison.use`. */
export function computeComparison(query: ComparisonQuery): Promise<ComparisonResultDto> {
  return http.post<ComparisonResultDto>('/comparisons/compute', query)
}

/** Save the query under a name for the lab (the result is re-computed whenever the view is opened). */
export function saveComparison(name: string, query: ComparisonQuery): Promise<SavedComparisonDto> {
  return http.post<SavedComparisonDto>('/comparisons', { name, query })
}

/** Saved views of the person's labs, newest first. */
export function listComparisons(labId?: number): Promise<SavedComparisonDto[]> {
  return http.get<SavedComparisonDto[]>(labId === undefined ? '/comparisons' : `/comparisons?labId=${labId}`)
}

/** A saved view with its result re-computed now; 404 when it is gone or in another lab. */
export function getComparison(comparisonId: number): Promise<{ comparison: SavedComparisonDto; result: ComparisonResultDto }> {
  return http.get<{ comparison: SavedComparisonDto; result: ComparisonResultDto }>(`/comparisons/${comparisonId}`)
}

/** Its creator or a lab manager only (403 otherwise). */
export function deleteComparison(comparisonId: number): Promise<void> {
  return http.delete<void>(`/comparisons/${comparisonId}`)
}
