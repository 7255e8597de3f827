export const TECHNIQUES = ['kerr-polar', 'kerr-longitudinal', 'mfm', 'other'] as const
export type Technique = (typeof TECHNIQUES)[number]

export const TECHNIQUE_LABELS: Record<Technique, string> = {
  'kerr-polar': 'Kerr, polar',
  'kerr-longitudinal': 'Kerr, longitudinal',
  mfm: 'Magnetic force microscopy',
  other: 'Other',
}

export const ANALYSIS_STATUSES = ['draft', 'submitted', 'changes-requested', 'approved'] as const
export type AnalysisStatus = (typeof ANALYSIS_STATUSES)[number]

export interface ProjectDto {
  id: number
  labId: number
  name: string
  description: string
  createdAt: string
  sampleCount: number
  imageCount: number
}

export interface SampleDto {
  id: number
  projectId: number
  name: string
  material: string
  thicknessNm: number | null
  substrate: string
  annealTemperatureC: number | null
  annealDurationMin: number | null
  annealAtmosphere: string
  annealFieldMT: number | null
  notes: string
}

/** A sample as its project's list shows it: with the number of its images (deleted ones left out). */
export interface SampleSummaryDto extends SampleDto {
  imageCount: number
}

export interface LabDto {
  id: number
  name: string
  institution: string
}
