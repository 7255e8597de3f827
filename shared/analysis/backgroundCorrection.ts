/**
 * Background correction of Kerr frames: difference imaging against a saturated reference, large-scale flat-fielding,
 * and pixelwise normalisation between the two saturated references.
 *
 * Methods (METHODS §8.1, §8.2, §5.1):
 * - Difference imaging: I − I_ref or I/I_ref − 1 with a domain-free reference taken with the sample saturated removes
 *   topography and optics structure and leaves domain contrast (digital Kerr microscopy since F. Schmidt, W. Rave &
 *   A. Hubert (1985), IEEE Trans. Magn. 21(5):1596 [R, secondary: Soldatov & Schäfer, arXiv:1612.02027; journal
 *   reference from memory]).
 * - Flat-fielding without a flat frame: subtract a Gaussian low-pass (σ well above the domain size) and add back its
 *   mean, so illumination gradients go and the mean grey level stays [P]. Large σ are computed on a decimated grid
 *   (anti-alias blur evaluated only at the samples, sample every 4 px, blur, bilinear back), which is 6× faster and
 *   matches the full-resolution low-pass to under 1 % of the domain contrast more than 2σ from the border (nearer,
 *   both are edge-replication guesses and differ by more; tests).
 * - Saturated references: m = (2I − I+ − I−)/(I+ − I−), clipped to [−1, 1] (linear Kerr response assumed) [P].
 * Checked against: METHODS.md check #32 (I+ 120, I− 80, I 110 → m = 0.50) and #31 (70 % of pixels at I+, 30 % at
 * I− → mean m = 0.40 = 2·0.70 − 1) [D]; synthetic ramp + stripes in the tests.
 * Input: GrayImage/FloatImage frames of equal size (register them first, §8.3); σ in pixels.
 * Output: new FloatImages; differences in input intensity units, ratios and m dimensionless.
 */
import { gaussianBlur, gaussianKernel } from './gaussianBlur'
import type { FloatImage, GrayImage } from './types'

type Frame = GrayImage | FloatImage

function assertSameSize(what: string, image: Frame, other: Frame): void {
  if (image.width !== other.width || image.height !== other.height) {
    throw new Error(
      `${what}: image is ${image.width}×${image.height} px but the reference is ${other.width}×${other.height} px; ` +
        'references must be taken at the same size and registered to the frame',
    )
  }
}

/**
 * Difference imaging against a saturated (domain-free) reference.
 * @param mode 'difference' → I − I_ref (intensity units); 'ratio' → I/I_ref − 1 (dimensionless, also removes
 *   multiplicative illumination). Where I_ref = 0 the ratio is undefined and 0 (no contrast) is returned.
 * @throws Error when the sizes differ.
 * @example subtractReference(frame, saturatedFrame, 'difference')
 */
export function subtractReference(image: Frame, reference: Frame, mode: 'difference' | 'ratio'): FloatImage {
  assertSameSize('subtractReference', image, reference)
  const { width, height } = image
  const n = width * height
  const a = image.data
  const b = reference.data
  const out = new Float32Array(n)
  if (mode === 'ratio') {
    for (let i = 0; i < n; i++) {
      const ref = b[i]
      out[i] = ref !== 0 ? a[i] / ref - 1 : 0
    }
  } else {
    for (let i = 0; i < n; i++) out[i] = a[i] - b[i]
  }
  return { width, height, data: out }
}

/** Sampling step of the decimated background grid, in pixels. */
const DECIMATION = 4
/** Anti-alias pre-blur σ before sampling every DECIMATION px: leaves ≤ 2e-5 of any pattern aliased towards DC. */
const PRE_BLUR_SIGMA = 0.75 * DECIMATION
const MIN_DECIMATED_SIGMA = 2 * DECIMATION
const MIN_DECIMATED_SIZE = 16 * DECIMATION

/** Sample positions 0 … n−1 (both ends included) spaced at most DECIMATION apart. */
function samplePositions(n: number): Int32Array {
  const count = Math.ceil((n - 1) / DECIMATION) + 1
  return Int32Array.from({ length: count }, (_, i) => Math.min(n - 1, i * DECIMATION))
}

/** For each pixel coordinate: index of the sample interval holding it and the linear weight of its right end. */
function interpolationTable(positions: Int32Array, n: number): { index: Int32Array; weight: Float32Array } {
  const index = new Int32Array(n)
  const weight = new Float32Array(n)
  let i = 0
  for (let p = 0; p < n; p++) {
    while (i < positions.length - 2 && p > positions[i + 1]) i++
    index[p] = i
    weight[p] = (p - positions[i]) / (positions[i + 1] - positions[i])
  }
  return { index, weight }
}

/**
 * gaussianBlur(image, σ) read only at the pixels (xs[i], ys[j]), without computing the others: the row pass at the
 * sampled columns of every row, then the column pass at the sampled rows. Same kernel, tap order, edge replication
 * and float32 rounding as gaussianBlur, so the values are identical to sampling the full-resolution blur.
 */
function sampledGaussian(image: Frame, sigma: number, xs: Int32Array, ys: Int32Array): Float32Array {
  const { width, height, data } = image
  const kernel = gaussianKernel(sigma)
  const radius = (kernel.length - 1) >> 1
  const nx = xs.length
  const ny = ys.length
  // The float32 value of each input sample, as gaussianBlur converts integer frames.
  const f = Math.fround
  const rows = new Float32Array(height * nx)
  const taps = kernel.length
  for (let y = 0; y < height; y++) {
    const row = y * width
    for (let i = 0; i < nx; i++) {
      const x = xs[i]
      let acc = 0
      if (x >= radius && x + radius < width) {
        // Interior sample: no tap needs the edge clamp (same taps, same order).
        const first = row + x - radius
        for (let k = 0; k < taps; k++) acc += f(data[first + k]) * kernel[k]
      } else {
        for (let k = -radius; k <= radius; k++) {
          let xx = x + k
          if (xx < 0) xx = 0
          else if (xx >= width) xx = width - 1
          acc += f(data[row + xx]) * kernel[k + radius]
        }
      }
      rows[y * nx + i] = acc
    }
  }
  const out = new Float32Array(nx * ny)
  for (let j = 0; j < ny; j++) {
    const y = ys[j]
    for (let i = 0; i < nx; i++) {
      let acc = 0
      for (let k = -radius; k <= radius; k++) {
        let yy = y + k
        if (yy < 0) yy = 0
        else if (yy >= height) yy = height - 1
        acc = f(acc + rows[yy * nx + i] * kernel[k + radius])
      }
      out[j * nx + i] = acc
    }
  }
  return out
}

/** The low-pass of flattenField, kept for the largest frame seen (it never leaves flattenField). */
let backgroundScratch = new Float32Array(0)

function backgroundBuffer(n: number): Float32Array {
  if (backgroundScratch.length < n) backgroundScratch = new Float32Array(n)
  return backgroundScratch.subarray(0, n)
}

/**
 * Large-σ Gaussian low-pass computed on a grid decimated by DECIMATION: anti-alias blur (σ1), sampling, blur of the
 * small grid with √(σ² − σ1²)/DECIMATION, bilinear interpolation back. Equivalent to the full-resolution blur for a
 * background that is smooth on the DECIMATION scale, at about 1/6 of the cost for σ ≈ 20.
 */
function decimatedGaussian(image: Frame, sigma: number): Float32Array {
  const { width, height } = image
  const xs = samplePositions(width)
  const ys = samplePositions(height)
  const nx = xs.length
  const ny = ys.length
  const small = sampledGaussian(image, PRE_BLUR_SIGMA, xs, ys)
  const smallSigma = Math.sqrt(sigma * sigma - PRE_BLUR_SIGMA * PRE_BLUR_SIGMA) / DECIMATION
  const blurred = gaussianBlur({ width: nx, height: ny, data: small }, smallSigma).data
  const col = interpolationTable(xs, width)
  const row = interpolationTable(ys, height)
  const out = backgroundBuffer(width * height)
  for (let y = 0; y < height; y++) {
    const j = row.index[y]
    const ty = row.weight[y]
    const top = j * nx
    const bottom = top + nx
    for (let x = 0; x < width; x++) {
      const i = col.index[x]
      const tx = col.weight[x]
      const upper = blurred[top + i] + tx * (blurred[top + i + 1] - blurred[top + i])
      const lower = blurred[bottom + i] + tx * (blurred[bottom + i + 1] - blurred[bottom + i])
      out[y * width + x] = upper + ty * (lower - upper)
    }
  }
  return out
}

/**
 * Remove large-scale illumination: I − G_σ * I + ⟨G_σ * I⟩, which keeps the mean grey level exactly.
 * For σ ≥ 8 px on frames of at least 64×64 the low-pass is computed on a grid decimated by 4 (see decimatedGaussian).
 * @param sigma Gaussian σ in pixels; choose several domain widths so domains are not flattened. σ ≤ 0 returns a copy.
 * @returns a new FloatImage; a constant image is returned unchanged (its low-pass equals itself).
 */
export function flattenField(image: Frame, sigma: number): FloatImage {
  const { width, height } = image
  const n = width * height
  const out = new Float32Array(n)
  // Nothing to level for σ ≤ 0 or an empty image: a float copy.
  if (!(sigma > 0) || n === 0) {
    for (let i = 0; i < n; i++) out[i] = image.data[i]
    return { width, height, data: out }
  }
  const background =
    sigma >= MIN_DECIMATED_SIGMA && width >= MIN_DECIMATED_SIZE && height >= MIN_DECIMATED_SIZE
      ? decimatedGaussian(image, sigma)
      : gaussianBlur(image, sigma, undefined, backgroundBuffer(n)).data
  let sum = 0
  for (let i = 0; i < n; i++) sum += background[i]
  const mean = sum / n
  const src = image.data
  for (let i = 0; i < n; i++) out[i] = src[i] - background[i] + mean
  return { width, height, data: out }
}

/**
 * Pixelwise reduced magnetisation from the two saturated references: m = (2I − I+ − I−)/(I+ − I−), clipped to
 * [−1, 1] (METHODS §5.1). Average m over the analysed area for M/Ms.
 * @param iUp reference at positive saturation (I+): a frame of the same size or one value for all pixels.
 * @param iDown reference at negative saturation (I−): a frame or one value.
 * @returns a new FloatImage of m. Pixels where I+ = I− carry no magnetic contrast and get m = 0.
 * @throws Error when a reference frame has a different size.
 * @example normalizeWithSaturatedReferences(frame, 120, 80) // I = 110 → m = 0.5
 */
export function normalizeWithSaturatedReferences(image: Frame, iUp: Frame | number, iDown: Frame | number): FloatImage {
  if (typeof iUp !== 'number') assertSameSize('normalizeWithSaturatedReferences', image, iUp)
  if (typeof iDown !== 'number') assertSameSize('normalizeWithSaturatedReferences', image, iDown)
  const { width, height } = image
  const n = width * height
  const src = image.data
  const out = new Float32Array(n)
  const upData = typeof iUp === 'number' ? null : iUp.data
  const downData = typeof iDown === 'number' ? null : iDown.data
  const upValue = typeof iUp === 'number' ? iUp : 0
  const downValue = typeof iDown === 'number' ? iDown : 0
  for (let i = 0; i < n; i++) {
    const up = upData ? upData[i] : upValue
    const down = downData ? downData[i] : downValue
    const span = up - down
    if (span === 0) continue
    let m = (2 * src[i] - up - down) / span
    if (m > 1) m = 1
    else if (m < -1) m = -1
    // A non-finite pixel (NaN input) carries no information: m = 0 rather than NaN.
    else if (m !== m) m = 0
    out[i] = m
  }
  return { width, height, data: out }
}
