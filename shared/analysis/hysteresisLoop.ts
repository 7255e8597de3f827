/**
 * Coercive field, exchange bias, remanence and squareness of a hysteresis loop from a field-sweep stack.
 *
 * Method (METHODS §5.2 [P]): frames in acquisition order are split into branches where the field step ΔH changes
 * sign (zero steps, i.e. repeated fields, stay in the current branch; the turning frame ends one branch and starts the
 * next). Per branch the zero crossings of M are found by linear interpolation between the bracketing frames (a frame
 * with M = 0 exactly, or a run of them between opposite signs, gives its field, the mean field for a run). Several
 * crossings on one branch (noise) are all reported; the one nearest in field to the middle of the branch's largest
 * |ΔM| step is used. Hc− comes from the descending branch, Hc+ from the ascending one; Hc = (Hc+ − Hc−)/2,
 * H_E = (Hc+ + Hc−)/2. Mr± = M at H = 0 by interpolation (frames at H = 0 exactly: their mean); Mr = (Mr+ − Mr−)/2
 * with Mr+ from the descending branch. When a direction has several branches (virgin curve, repeated loops), the one
 * spanning the widest field range is used (the first on ties).
 * Saturation: the frames at the two highest distinct fields of the used branches must agree within
 * `saturationTolerance`·Ms, and likewise at the two lowest, with Ms = half the difference of the two end levels;
 * S = Mr/Ms only then, otherwise null ("say so instead of normalising") [P].
 * Checked against: METHODS checks #33–#35 (Hc 22.5 Oe, Mr 0.8, S 0.8, H_E 0; shifted by +5 Oe → H_E = 5) [D] and a
 * synthetic tanh loop with known Hc.
 * Input: { field, magnetization } in acquisition order, any field unit (results are in the same unit); M normalised
 * or not, increasing with H (positive Kerr sensitivity). Points with a non-finite value are skipped; indices in the
 * output refer to the input array. Use the measured field at the sample (remanent field of the yoke) [P].
 */

/** One frame of a field sweep. */
export interface LoopPoint {
  field: number
  magnetization: number
}

export type BranchDirection = 'descending' | 'ascending'

/** A monotone run of the sweep; indices into the input array, inclusive. */
export interface LoopBranch {
  direction: BranchDirection
  startIndex: number
  endIndex: number
}

/** A field at which M changes sign on a branch. */
export interface ZeroCrossing {
  /** Index into `branches`. */
  branchIndex: number
  direction: BranchDirection
  /** Interpolated field of M = 0, in the caller's unit. */
  field: number
  /** Input index of the last frame before the crossing. */
  frameIndex: number
  /** |ΔM| across the crossing. */
  stepDeltaM: number
  /** True for the crossing used for Hc± of the branch used in the result. */
  chosen: boolean
}

/** Loop parameters; null where the loop does not define them (see TSDoc of {@link hysteresisLoop}). */
export interface HysteresisLoopResult {
  branches: LoopBranch[]
  /** Hc−: M = 0 on the descending branch (usually negative). */
  coerciveFieldDescending: number | null
  /** Hc+: M = 0 on the ascending branch. */
  coerciveFieldAscending: number | null
  /** Hc = (Hc+ − Hc−)/2. */
  coerciveField: number | null
  /** H_E = (Hc+ + Hc−)/2. */
  exchangeBias: number | null
  /** Mr+: M at H = 0 on the descending branch. */
  remanenceDescending: number | null
  /** Mr−: M at H = 0 on the ascending branch. */
  remanenceAscending: number | null
  /** Mr = (Mr+ − Mr−)/2. */
  remanence: number | null
  /** S = Mr/Ms, only for a saturated loop. */
  squareness: number | null
  /** Both ends of the loop flat and closed within the tolerance. */
  saturated: boolean
  /** Ms = half the difference between the high- and low-field levels, only for a saturated loop. */
  saturationMagnetization: number | null
  /** Index into `branches` of the descending / ascending branch used. */
  usedBranches: { descending: number | null; ascending: number | null }
  /** Every zero crossing of every branch, in acquisition order. */
  zeroCrossings: ZeroCrossing[]
}

function splitBranches(points: LoopPoint[], valid: number[]): LoopBranch[] {
  const branches: LoopBranch[] = []
  let direction = 0
  let start = 0
  for (let k = 1; k < valid.length; k++) {
    const step = Math.sign(points[valid[k]].field - points[valid[k - 1]].field)
    if (step === 0) continue
    if (direction === 0) {
      direction = step
      continue
    }
    if (step !== direction) {
      branches.push({ direction: direction < 0 ? 'descending' : 'ascending', startIndex: start, endIndex: k - 1 })
      start = k - 1
      direction = step
    }
  }
  if (direction !== 0) {
    branches.push({ direction: direction < 0 ? 'descending' : 'ascending', startIndex: start, endIndex: valid.length - 1 })
  }
  return branches
}

/** Crossings on one branch (positions in `valid`), each with the field and the |ΔM| across it. */
function branchCrossings(
  points: LoopPoint[],
  valid: number[],
  branch: LoopBranch,
): { field: number; position: number; stepDeltaM: number }[] {
  const crossings: { field: number; position: number; stepDeltaM: number }[] = []
  let lastSigned = -1
  for (let k = branch.startIndex; k <= branch.endIndex; k++) {
    const m = points[valid[k]].magnetization
    if (m === 0) continue
    if (lastSigned >= 0 && Math.sign(m) !== Math.sign(points[valid[lastSigned]].magnetization)) {
      const a = points[valid[lastSigned]]
      const b = points[valid[k]]
      let field: number
      if (k === lastSigned + 1) {
        field = a.field + ((0 - a.magnetization) * (b.field - a.field)) / (b.magnetization - a.magnetization)
      } else {
        // Frames with M = 0 exactly lie between: take their field (the mean field of the run).
        let sum = 0
        for (let z = lastSigned + 1; z < k; z++) sum += points[valid[z]].field
        field = sum / (k - lastSigned - 1)
      }
      crossings.push({ field, position: lastSigned, stepDeltaM: Math.abs(b.magnetization - a.magnetization) })
    }
    lastSigned = k
  }
  return crossings
}

/** Field at the middle of the largest |ΔM| step of a branch. */
function largestStepField(points: LoopPoint[], valid: number[], branch: LoopBranch): number {
  let best = -1
  let field = points[valid[branch.startIndex]].field
  for (let k = branch.startIndex; k < branch.endIndex; k++) {
    const a = points[valid[k]]
    const b = points[valid[k + 1]]
    const step = Math.abs(b.magnetization - a.magnetization)
    if (step > best) {
      best = step
      field = (a.field + b.field) / 2
    }
  }
  return field
}

/** M at H = 0 on a branch by interpolation; mean of frames at H = 0 exactly; null if the branch misses H = 0. */
function remanenceOf(points: LoopPoint[], valid: number[], branch: LoopBranch): number | null {
  let sum = 0
  let count = 0
  for (let k = branch.startIndex; k <= branch.endIndex; k++) {
    const p = points[valid[k]]
    if (p.field === 0) {
      sum += p.magnetization
      count++
    }
  }
  if (count > 0) return sum / count
  for (let k = branch.startIndex; k < branch.endIndex; k++) {
    const a = points[valid[k]]
    const b = points[valid[k + 1]]
    if (Math.sign(a.field) !== Math.sign(b.field)) {
      return a.magnetization + ((0 - a.field) * (b.magnetization - a.magnetization)) / (b.field - a.field)
    }
  }
  return null
}

/** Branch of a direction with the widest field span (first on ties), or null. */
function widestBranch(points: LoopPoint[], valid: number[], branches: LoopBranch[], direction: BranchDirection): number | null {
  let best: number | null = null
  let bestSpan = -1
  for (let index = 0; index < branches.length; index++) {
    const branch = branches[index]
    if (branch.direction !== direction) continue
    const span = Math.abs(points[valid[branch.endIndex]].field - points[valid[branch.startIndex]].field)
    if (span > bestSpan) {
      bestSpan = span
      best = index
    }
  }
  return best
}

/** Levels and spreads of M at the two highest and the two lowest distinct fields of the used frames. */
function endLevels(points: LoopPoint[], frames: number[]): { high: number; low: number; spread: number } | null {
  const fields = Array.from(new Set(frames.map((i) => points[i].field))).sort((a, b) => a - b)
  if (fields.length < 4) return null
  const level = (lo: number, hi: number) => {
    let min = Infinity
    let max = -Infinity
    let sum = 0
    let count = 0
    for (const i of frames) {
      const { field, magnetization } = points[i]
      if (field < lo || field > hi) continue
      min = Math.min(min, magnetization)
      max = Math.max(max, magnetization)
      sum += magnetization
      count++
    }
    return { mean: sum / count, spread: max - min }
  }
  const top = level(fields[fields.length - 2], fields[fields.length - 1])
  const bottom = level(fields[0], fields[1])
  return { high: top.mean, low: bottom.mean, spread: Math.max(top.spread, bottom.spread) }
}

/**
 * Analyse a hysteresis loop.
 * @param points frames in acquisition order; field in any unit (results use the same unit).
 * @param options.saturationTolerance allowed spread of M over the two most extreme fields at each end, as a fraction
 *   of Ms (default 0.05).
 * @returns branches, Hc±, Hc, H_E, Mr±, Mr, S, saturation and all zero crossings. Fewer than two valid points, a
 *   constant field or a loop without crossings give empty/null fields (never NaN). Hc, H_E and Mr need both a
 *   descending and an ascending branch; a single branch still reports its own Hc± and Mr±.
 */
export function hysteresisLoop(points: LoopPoint[], options: { saturationTolerance?: number } = {}): HysteresisLoopResult {
  const tolerance = options.saturationTolerance ?? 0.05
  const valid: number[] = []
  points.forEach((p, i) => {
    if (Number.isFinite(p.field) && Number.isFinite(p.magnetization)) valid.push(i)
  })
  const localBranches = splitBranches(points, valid)

  const zeroCrossings: ZeroCrossing[] = []
  const chosenField: (number | null)[] = localBranches.map((branch, branchIndex) => {
    const crossings = branchCrossings(points, valid, branch)
    const target = largestStepField(points, valid, branch)
    let chosen = -1
    crossings.forEach((c, j) => {
      if (chosen < 0 || Math.abs(c.field - target) < Math.abs(crossings[chosen].field - target)) chosen = j
    })
    crossings.forEach((c, j) =>
      zeroCrossings.push({
        branchIndex,
        direction: branch.direction,
        field: c.field,
        frameIndex: valid[c.position],
        stepDeltaM: c.stepDeltaM,
        chosen: j === chosen,
      }),
    )
    return chosen >= 0 ? crossings[chosen].field : null
  })

  const descending = widestBranch(points, valid, localBranches, 'descending')
  const ascending = widestBranch(points, valid, localBranches, 'ascending')
  // Crossings of branches that are not used keep chosen = false, so callers can tell which ones entered Hc.
  for (const c of zeroCrossings) if (c.branchIndex !== descending && c.branchIndex !== ascending) c.chosen = false

  const hcMinus = descending === null ? null : chosenField[descending]
  const hcPlus = ascending === null ? null : chosenField[ascending]
  const mrPlus = descending === null ? null : remanenceOf(points, valid, localBranches[descending])
  const mrMinus = ascending === null ? null : remanenceOf(points, valid, localBranches[ascending])
  const remanence = mrPlus !== null && mrMinus !== null ? (mrPlus - mrMinus) / 2 : null

  const usedFrames: number[] = []
  for (const index of [descending, ascending]) {
    if (index === null) continue
    for (let k = localBranches[index].startIndex; k <= localBranches[index].endIndex; k++) usedFrames.push(valid[k])
  }
  const ends = endLevels(points, usedFrames)
  const ms = ends ? Math.abs(ends.high - ends.low) / 2 : 0
  const saturated = ends !== null && ms > 0 && ends.spread <= tolerance * ms

  return {
    branches: localBranches.map((b) => ({ direction: b.direction, startIndex: valid[b.startIndex], endIndex: valid[b.endIndex] })),
    coerciveFieldDescending: hcMinus,
    coerciveFieldAscending: hcPlus,
    coerciveField: hcMinus !== null && hcPlus !== null ? (hcPlus - hcMinus) / 2 : null,
    exchangeBias: hcMinus !== null && hcPlus !== null ? (hcPlus + hcMinus) / 2 : null,
    remanenceDescending: mrPlus,
    remanenceAscending: mrMinus,
    remanence,
    squareness: saturated && remanence !== null ? remanence / ms : null,
    saturated,
    saturationMagnetization: saturated ? ms : null,
    usedBranches: { descending, ascending },
    zeroCrossings,
  }
}
