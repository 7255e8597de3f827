/**
 * Relative magnetization M/Ms of a frame, from a binary domain map or from grey levels with saturated references.
 *
 * Method (METHODS §5.1) [P]: binary, M/Ms = (A_up − A_down)/(A_up + A_down) = 2·A_A(up) − 1 (polar sensitivity,
 * two-level domains, wall area negligible); grey-level, pixelwise m = (2I − I₊ − I₋)/(I₊ − I₋) clipped to [−1, 1]
 * and averaged over the analysed pixels (linear Kerr response between the saturated references I₊ and I₋).
 * Checked against: METHODS.md checks #31 (A_A(up) = 0.70 → 0.40) and #32 (I₊ 120, I₋ 80, I 110 → 0.50).
 * Input: BinaryMask (1 = up, ignored pixels excluded) or a grey frame with scalar references and an optional ignore
 * map (1 = excluded). Output: dimensionless fractions and M/Ms ∈ [−1, 1].
 */
import type { BinaryMask, FloatImage, GrayImage } from './types'

export interface AreaFractions {
  /** A_A(up) among analysed pixels (0 when none is analysed). */
  up: number
  /** A_A(down) among analysed pixels (0 when none is analysed). */
  down: number
  analysedPx: number
}

/** Up and down area fractions per analysed area. */
export function areaFractions(mask: BinaryMask): AreaFractions {
  const { data, ignore } = mask
  const n = mask.width * mask.height
  const { up, analysedPx } = countUp(data, ignore, n)
  // Degenerate: nothing analysed ⇒ both fractions 0 (no evidence for either phase).
  if (analysedPx === 0) return { up: 0, down: 0, analysedPx: 0 }
  return { up: up / analysedPx, down: (analysedPx - up) / analysedPx, analysedPx }
}

/** Word order check for reading four bytes as one 32-bit word (little-endian byte k = bits 8k..8k+7). */
const LITTLE_ENDIAN = new Uint8Array(new Uint32Array([1]).buffer)[0] === 1

/** High bit of every non-zero byte of v (carry-free: (b & 0x7f) + 0x7f sets the high bit iff b & 0x7f ≠ 0). */
function nonZeroBytes(v: number): number {
  return (((v & 0x7f7f7f7f) + 0x7f7f7f7f) | v) & 0x80808080
}

/** Number of high bits set in a nonZeroBytes-style word (0..4). */
function countHighBits(v: number): number {
  return Math.imul(v >>> 7, 0x01010101) >>> 24
}

/**
 * Up and analysed pixel counts among the first n pixels (up = data ≠ 0, analysed = ignore absent or 0). Four pixels
 * at a time through 32-bit words where the arrays allow it, then one at a time.
 */
function countUp(data: Uint8Array, ignore: Uint8Array | undefined, n: number): { up: number; analysedPx: number } {
  let up = 0
  let analysedPx = 0
  let i = 0
  const words = LITTLE_ENDIAN && data.byteOffset % 4 === 0 && data.length >= n && (ignore === undefined || (ignore.byteOffset % 4 === 0 && ignore.length >= n))
  if (words) {
    const quads = n >>> 2
    const dataWords = new Int32Array(data.buffer, data.byteOffset, quads)
    if (ignore === undefined) {
      for (let q = 0; q < quads; q++) up += countHighBits(nonZeroBytes(dataWords[q]))
      analysedPx = quads << 2
    } else {
      const ignoreWords = new Int32Array(ignore.buffer, ignore.byteOffset, quads)
      for (let q = 0; q < quads; q++) {
        const analysed = ~nonZeroBytes(ignoreWords[q]) & 0x80808080
        analysedPx += countHighBits(analysed)
        up += countHighBits(nonZeroBytes(dataWords[q]) & analysed)
      }
    }
    i = quads << 2
  }
  for (; i < n; i++) {
    if (ignore !== undefined && ignore[i] !== 0) continue
    analysedPx++
    if (data[i] !== 0) up++
  }
  return { up, analysedPx }
}

/**
 * M/Ms = 2·A_A(up) − 1 over the analysed pixels.
 * @returns 0 when no pixel is analysed (check `areaFractions(mask).analysedPx` to tell it from a demagnetised frame).
 * @example magnetizationFromMask(maskWith70PercentUp) // 0.4
 */
export function magnetizationFromMask(mask: BinaryMask): number {
  const { up, down, analysedPx } = areaFractions(mask)
  return analysedPx > 0 ? up - down : 0
}

/**
 * Mean pixelwise m = (2I − I₊ − I₋)/(I₊ − I₋), clipped to [−1, 1], over the analysed pixels.
 * @param iUp grey level of the saturated "up" reference (I₊); `iDown` of the "down" reference (I₋); either order of
 *   brightness is allowed (a negative Kerr contrast gives I₊ < I₋).
 * @returns 0 when the references are equal (no contrast to scale by) or no pixel is analysed.
 * @example magnetizationFromGrey({ width: 1, height: 1, data: new Float32Array([110]) }, 120, 80) // 0.5
 */
export function magnetizationFromGrey(
  image: GrayImage | FloatImage,
  iUp: number,
  iDown: number,
  ignore?: Uint8Array,
): number {
  const contrast = iUp - iDown
  if (!(Math.abs(contrast) > 0) || !Number.isFinite(contrast)) return 0
  const { data } = image
  const n = image.width * image.height
  const sum = iUp + iDown
  let total = 0
  let count = 0
  for (let i = 0; i < n; i++) {
    if (ignore !== undefined && ignore[i] !== 0) continue
    const v = data[i]
    if (!Number.isFinite(v)) continue
    let m = (2 * v - sum) / contrast
    if (m > 1) m = 1
    else if (m < -1) m = -1
    total += m
    count++
  }
  return count > 0 ? total / count : 0
}
