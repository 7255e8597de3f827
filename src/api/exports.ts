/**
 * Exports: measurement tables as files the browser downloads itself (a same-origin GET carries the session cookie),
 * the latest mask as PNG, and the data of a sample's report page.
 */
import type { SampleReportDto } from '@shared/types/report'
import { apiUrl, http } from './http'

/** Exactly one of image, sample or project. */
export type ExportScope = { imageId: number } | { sampleId: number } | { projectId: number }

export type TableFormat = 'csv' | 'xlsx'

/** The download URL of a measurements table; `includeDrafts` false (the default) keeps approved analyses only. */
export function measurementsExportUrl(format: TableFormat, scope: ExportScope, includeDrafts = false): string {
  const params = new URLSearchParams()
  for (const [key, value] of Object.entries(scope)) params.set(key, String(value))
  params.set('includeDrafts', String(includeDrafts))
  return apiUrl(`/exports/measurements.${format}?${params.toString()}`)
}

/** The download URL of a frame's latest saved mask as an 8-bit PNG (up = 255). */
export function maskPngUrl(frameId: number): string {
  return apiUrl(`/frames/${frameId}/annotations/latest/mask.png`)
}

/** Needs `export.tables` in the sample's lab (403 otherwise). */
export function getSampleReport(sampleId: number, includeDrafts = false): Promise<SampleReportDto> {
  return http.get<SampleReportDto>(`/samples/${sampleId}/report?includeDrafts=${includeDrafts}`)
}
