/**
 * The messages between the analysis pool (server/analysis/analysisPool.ts) and its worker threads
 * (analysisWorker.ts). Everything here survives the structured clone; masks (encoded, from the measure pass),
 * histograms and rendered frames travel as transferred buffers, file bytes as one SharedArrayBuffer per file (or, for a file on disk, its path: each worker
 * reads the ranges it needs).
 */
import type { FrameAnalysis, FrameDistributions, FrameMeasurements } from '../../shared/analysis/analyzeFrame'
import type { AnalysisRecipe } from '../../shared/analysis/recipe'
import type { BinaryMask, FloatImage, GrayImage } from '../../shared/analysis/types'
import type { MotionAnalysis, MotionOptions } from '../../shared/analysis/analyzeMotion'
import type { MotionRow } from '../../shared/analysis/wallVelocity'
import type { DecodeLimits, ImageHeader } from '../../shared/imageio/decodeImage'
import type { BootstrapReference } from '../../shared/analysis/powerLawFit'

/** Context of a mask measured on its own (see `measureMaskInPool`). */
export interface MaskMeasureContext {
  pixelSizeNm: number | null
  /** The preprocessed frame, for the domain contrast. */
  image?: FloatImage | GrayImage
  /** Or the raw frame with its recipe: the worker preprocesses it (no registration) for the contrast. */
  frame?: GrayImage
  recipe?: AnalysisRecipe
  /** Reference frame for a recipe with background 'reference'. */
  reference?: GrayImage
  threshold?: number | null
  reassignedFraction?: number
  /** Also return the width histogram, diameters and spectrum. */
  detail?: boolean
}

/** Per-frame context of the single-frame task (reference and registration anchor follow from the recipe). */
export interface FrameTaskContext {
  pixelSizeNm: number | null
  threshold?: number
  detail?: boolean
}

/** A frame's derivatives as ingest stores them: preview and thumbnail PNGs, and its raw little-endian pixels. */
export interface RenderedFrame {
  preview: Uint8Array
  thumbnail: Uint8Array
  pixels: Uint8Array
  /** Domain pattern of the thumbnail in raw units (frameRendering.patternAboveBackground): ingest keeps the frame with the most as the cover. */
  pattern: number
}

/** The work a worker can be given; frame tasks name a shared file and a 0-based frame index. */
export type AnalysisTask =
  | { kind: 'probe'; fileId: number }
  | { kind: 'rawRange'; fileId: number; index: number }
  | { kind: 'histogram'; fileId: number; index: number; recipe: AnalysisRecipe; range: { min: number; max: number } }
  | { kind: 'measure'; fileId: number; index: number; recipe: AnalysisRecipe; pixelSizeNm: number | null; threshold?: number }
  | { kind: 'contrast'; fileId: number; index: number; recipe: AnalysisRecipe; mask: BinaryMask }
  | { kind: 'analyzeFrame'; fileId: number; index: number; recipe: AnalysisRecipe; context: FrameTaskContext }
  | { kind: 'measureMask'; mask: BinaryMask; context: MaskMeasureContext }
  | { kind: 'motion'; fileId: number; recipe: AnalysisRecipe; rows: MotionRow[]; options: MotionOptions }
  | { kind: 'render'; fileId: number; index: number }
  | { kind: 'bootstrapCount'; sets: Float64Array[]; reference: BootstrapReference }

/** What each task kind returns. */
export interface AnalysisTaskResults {
  probe: ImageHeader
  rawRange: { min: number; max: number }
  histogram: Uint32Array
  /** The mask in the stored encoding (shared/imageio/maskEncoding.ts): a few tens of kB where the bytes are 1 MB. */
  measure: { measurements: FrameMeasurements; encodedMask: Uint8Array }
  contrast: number
  analyzeFrame: FrameAnalysis
  measureMask: { measurements: FrameMeasurements; distributions?: FrameDistributions }
  motion: MotionAnalysis
  render: RenderedFrame
  bootstrapCount: number
}

/** Pool → worker. Messages on one port arrive in order, so a task always finds the files shared before it. */
export type WorkerRequest =
  | { type: 'share'; fileId: number; buffer: SharedArrayBuffer; byteLength: number; fileName: string; limits?: Partial<DecodeLimits> }
  | { type: 'open'; fileId: number; path: string; fileName: string; limits?: Partial<DecodeLimits> }
  | { type: 'release'; fileId: number }
  | { type: 'task'; id: number; task: AnalysisTask }

/** An error as it crosses the thread boundary (ImageDecodeError keeps its code and HTTP status). */
export interface SerializedError {
  name: string
  message: string
  code?: string
  status?: number
}

/** Worker → pool. */
export type WorkerResponse =
  | { type: 'ready' }
  | { type: 'result'; id: number; ok: true; value: unknown }
  | { type: 'result'; id: number; ok: false; error: SerializedError }
