/**
 * The hysteresis loop of METHODS §5.2 as the frames of a field sweep (check #33–#35 [D]): a descending branch
 * H (Oe) = [100, 60, 30, 10, 0, −10, −20, −30, −60, −100] with M = [1, 1, 0.98, 0.9, 0.8, 0.6, 0.2, −0.6, −1, −1], then
 * the ascending branch M_asc(H) = −M_desc(−H) back to +100 Oe (the turning frame at −100 Oe is not repeated).
 * Expected: Hc− = −22.5 Oe, Hc+ = +22.5 Oe, Hc = 22.5 Oe = 1790.49 A/m, H_E = 0, Mr = 0.8, S = 0.8.
 */
import type { LoopSummary } from '@shared/analysis/analyzeStack'
import { hysteresisLoop } from '@shared/analysis/hysteresisLoop'

const DESCENDING_H = [100, 60, 30, 10, 0, -10, -20, -30, -60, -100]
const DESCENDING_M = [1, 1, 0.98, 0.9, 0.8, 0.6, 0.2, -0.6, -1, -1]

export const LOOP_FRAMES = [
  ...DESCENDING_H.map((h, i) => ({ field: h, magnetization: DESCENDING_M[i] })),
  ...DESCENDING_H.map((h) => -h)
    .slice(1)
    .map((h) => ({ field: h, magnetization: -DESCENDING_M[DESCENDING_H.indexOf(-h)] })),
].map((f, index) => ({ index, ...f }))

/** The loop summary the worker stores for these frames (computed by the engine, not written by hand). */
export function loopSummaryOf(frames: { field: number; magnetization: number }[], fieldUnit = 'Oe'): LoopSummary {
  return { ...hysteresisLoop(frames), fieldUnit, jumps: [], jumpSizeFit: null }
}
