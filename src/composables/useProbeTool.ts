import { shallowRef, watch, type Ref, type ShallowRef } from 'vue'
import type { GrayImage } from '@shared/analysis/types'
import { fitTanhProfile, sampleLineProfile, type TanhFit } from '@shared/analysis/wallProfileFit'
import { useLineTool } from './useLineTool'
import type { Point, Segment, StageHandle } from './usePanZoom'

/** A line drawn across a wall, the raw intensity along it, and the tanh fit (null when the profile has no step). */
export interface ProbeResult {
  segment: Segment
  /** Distance along the line from its start, px. */
  positions: number[]
  values: number[]
  fit: TanhFit | null
}

export interface ProbeToolOptions {
  enabled: Ref<boolean>
  pointerPosition: () => Point | null
  /** The raw frame (not the display rendering): the fit reads the stored intensities. */
  frame: () => GrayImage | null
  /** Parallel lines on each side averaged with the central one, 1 px apart (default 1: three lines). */
  halfWidth?: Ref<number>
  onProbe?: (result: ProbeResult) => void
}

export interface ProbeTool {
  /** The line being drawn or last measured. */
  draft: ShallowRef<Segment | null>
  result: ShallowRef<ProbeResult | null>
  /** Keyboard: the first call sets the start of the line, the second its end (and measures). */
  placePoint: (point: Point) => void
  /** Measure along a given line (also what a drag ends with). */
  probe: (segment: Segment) => ProbeResult | null
  clear: () => void
}

/**
 * Drag a line across a domain wall: sample the raw frame along it (bilinear, averaged over parallel lines) with
 * `sampleLineProfile` and fit I(x) = a + b·tanh((x − x0)/w) with `fitTanhProfile` (METHODS §7.1). The canvas reports
 * positions with pixel (i, j) covering [i, i+1) × [j, j+1); the engine puts pixel centres on integers, hence the
 * half-pixel shift.
 */
export function useProbeTool(stageRef: Ref<StageHandle | null | undefined>, options: ProbeToolOptions): ProbeTool {
  const result = shallowRef<ProbeResult | null>(null)
  let anchor: Point | null = null

  function probe(segment: Segment): ProbeResult | null {
    const frame = options.frame()
    if (!frame) return null
    const { start, end } = segment
    const profile = sampleLineProfile(frame, start.x - 0.5, start.y - 0.5, end.x - 0.5, end.y - 0.5, { halfWidth: options.halfWidth?.value ?? 1 })
    const fit = fitTanhProfile(profile.positions, profile.values)
    const measured: ProbeResult = {
      segment,
      positions: Array.from(profile.positions),
      values: Array.from(profile.values),
      // A flat profile (no step found) has nothing to show as a fit.
      fit: fit.b !== 0 && fit.w > 0 ? fit : null,
    }
    result.value = measured
    options.onProbe?.(measured)
    return measured
  }

  const line = useLineTool(stageRef, { enabled: options.enabled, pointerPosition: options.pointerPosition, onLine: (segment) => void probe(segment) })

  function placePoint(point: Point): void {
    if (!options.enabled.value) return
    if (!anchor) {
      anchor = point
      line.draft.value = { start: point, end: point }
      return
    }
    const segment = { start: anchor, end: point }
    anchor = null
    line.draft.value = segment
    probe(segment)
  }

  function clear(): void {
    anchor = null
    line.clear()
  }

  watch(options.enabled, (on) => {
    if (!on) anchor = null
  })

  return { draft: line.draft, result, placePoint, probe, clear }
}
