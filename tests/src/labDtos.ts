/**
 * Answers of the API as client tests fake them, for the demo scenario's sample KB24-A300 (Ta/CoFeB/MgO annealed at
 * 300 °C in project 1) and its field sweep: one place for the fields a test does not care about, so each test names
 * only what it checks (overrides).
 */
import type { ImageDetailDto } from '@shared/types/image'
import type { SampleDto, SampleSummaryDto } from '@shared/types/lab'
import type { SampleFrameMeasurementDto, SampleStackRunSummaryDto } from '@shared/types/sampleMeasurements'

/** Sample 3, KB24-A300, as GET /api/samples/:id (and the report, the measurements) carry it. */
export function sampleDto(overrides: Partial<SampleDto> = {}): SampleDto {
  return {
    id: 3,
    projectId: 1,
    name: 'KB24-A300',
    material: 'Ta/CoFeB/MgO',
    thicknessNm: 1.1,
    substrate: 'Si / 100 nm SiO2',
    annealTemperatureC: 300,
    annealDurationMin: 60,
    annealAtmosphere: 'vacuum',
    annealFieldMT: 600,
    notes: '',
    ...overrides,
  }
}

/** A sample as GET /api/projects/:id/samples lists it, with its image count. */
export function sampleSummaryDto(overrides: Partial<SampleSummaryDto> = {}): SampleSummaryDto {
  return { ...sampleDto(), imageCount: 0, ...overrides }
}

/** Image 12, the 41-frame field sweep of KB24-A300, as GET /api/images/:id answers it (frames left empty). */
export function imageDetailDto(overrides: Partial<ImageDetailDto> = {}): ImageDetailDto {
  return {
    id: 12,
    name: 'KB24-A300_field-sweep.tif',
    sha256: 'cd'.repeat(32),
    width: 512,
    height: 512,
    bitDepth: 16,
    frameCount: 41,
    coverFrameIndex: 20,
    pixelSizeNm: 200,
    projectId: 1,
    sampleId: 3,
    uploadedById: 4,
    technique: 'kerr-polar',
    createdAt: '2026-11-12T14:05:00.000Z',
    acquiredAt: null,
    annotationStatus: 'new',
    approvedFrameCount: 0,
    notes: '',
    pixelSizeSource: 'tiff',
    mediaType: 'image/tiff',
    byteSize: 21_500_000,
    sample: { id: 3, name: 'KB24-A300', annealTemperatureC: 300 },
    frames: [],
    ...overrides,
  }
}

/** One stack run of KB24-A300's images as GET /api/samples/3/measurements lists it (a finished, calibrated field sweep). */
export function sampleStackRunDto(overrides: Partial<SampleStackRunSummaryDto> = {}): SampleStackRunSummaryDto {
  return {
    runId: 7,
    imageId: 12,
    imageName: 'KB24-A300_field-sweep.tif',
    status: 'done',
    framesTotal: 41,
    framesDone: 41,
    createdAt: '2026-11-12T15:00:00.000Z',
    finishedAt: '2026-11-12T15:04:00.000Z',
    pixelSizeNm: 200,
    framesMeasured: 41,
    nearZeroFrame: { index: 20, magnetization: -0.013, meanWidthPx: 2.05, meanWidthNm: 410, periodPx: 4.2, periodNm: 840 },
    medianWidthPx: 2.2,
    medianWidthNm: 440,
    medianPeriodPx: 4.5,
    medianPeriodNm: 900,
    coerciveField: 1.8,
    fieldUnit: 'mT',
    tcK: null,
    beta: null,
    ...overrides,
  }
}

/** The latest analysis of one frame (a calibrated, approved remanent-state image). */
export function sampleFrameMeasurementDto(overrides: Partial<SampleFrameMeasurementDto> = {}): SampleFrameMeasurementDto {
  return {
    analysisId: 31,
    imageId: 4,
    imageName: 'KB24-A300_remanent.tif',
    frameIndex: 0,
    field: 0,
    fieldUnit: 'mT',
    temperatureK: 295,
    status: 'approved',
    createdAt: '2026-11-13T09:00:00.000Z',
    pixelSizeNm: 100,
    magnetization: 0.02,
    meanWidthPx: 5,
    meanWidthNm: 500,
    periodPx: 10,
    periodNm: 1000,
    ...overrides,
  }
}
