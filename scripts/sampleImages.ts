/**
 * Synthetic Kerr-microscopy images with known ground truth, for the demo lab (scripts/demoScenario.ts), tests and the
 * seed. Everything is deterministic for a given seed.
 *
 * Domain geometry: Gaussian white noise, filtered in Fourier space, then thresholded.
 * - Labyrinth: a ring filter exp(−(|q| − q0)²/(2σq²)) around q0 = 1/λ, thresholded at 0. A narrow-band Gaussian field
 *   thresholded at its median gives a maze whose spectrum peaks at q0, i.e. period λ = up width + down width [P].
 * - Stripes: the same ring multiplied by an angular Gaussian around one direction, so the maze aligns into stripes.
 * - Field sweep: low-pass noise (correlation length ℓ) ranked to a uniform map U ∈ [0, 1); a pixel is "up" when
 *   U > 1 − p with p = (1 + m)/2, so the up fraction gives M/Ms = m exactly up to one pixel. m(H) follows tanh loops,
 *   descending m = tanh((H + Hc)/w), ascending m = tanh((H − Hc)/w): zero crossings at ∓Hc, coercive field Hc.
 *   Domains appear where U is extreme and grow with the field (nucleation and wall motion, return-point memory).
 * - Temperature ramp: fixed stripes whose Kerr contrast is c0·(1 − T/Tc)^β below Tc and 0 above (mean-field-like
 *   power law of the order parameter; the contrast is taken ∝ Ms, the polar Kerr signal ∝ Mz [P]).
 * - Bubble growth (wall motion): a reversed bubble expanding pulse by pulse with the creep-law velocity of each pulse
 *   field, its wall a self-affine ring of exponent ζ (renderMotionSeries).
 * Rendering (renderKerrFrame): I = I0·(1 + g(x,y))·(1 + (c/2)·(G_σ * d)) + bias, d = ±1, G_σ a Gaussian blur of σ px
 * (optical resolution), g a gentle linear illumination gradient; shot noise with 2 e⁻ per ADU (sd √(I/2) ADU, normal
 * approximation of Poisson) and read noise; rounded and clipped to 16 bits [P].
 */
import { fft2d, ifft2d } from '../shared/analysis/fft2d'
import { gaussianBlur } from '../shared/analysis/gaussianBlur'
import { createRandom } from '../shared/analysis/seededRandom'
import type { GrayImage } from '../shared/analysis/types'

/** Camera and optics of the synthetic Kerr microscope. */
export interface KerrRendering {
  /** Mean illumination in ADU (before the gradient). */
  baseLevel: number
  /** Camera offset in ADU. */
  bias: number
  /** Optical blur σ in px. */
  blurSigmaPx: number
  /** Relative illumination change from one edge to the other, along x and y. */
  gradient: [number, number]
  /** Electrons per ADU, for the shot noise. */
  electronsPerAdu: number
  /** Read noise in ADU (sd). */
  readNoiseAdu: number
}

export const DEFAULT_RENDERING: Readonly<KerrRendering> = {
  baseLevel: 15000,
  bias: 100,
  blurSigmaPx: 1.2,
  gradient: [0.08, -0.05],
  electronsPerAdu: 2,
  readNoiseAdu: 6,
}

/** Frequency of FFT bin k in cycles per px (bins ≥ n/2 are negative). */
function binFrequency(k: number, n: number): number {
  return k < n / 2 ? k / n : (k - n) / n
}

/**
 * Gaussian white noise filtered by `filter(qx, qy)` (frequencies in cycles/px), real part, zero mean.
 * @param size a power of two.
 */
export function filteredNoise(size: number, seed: number, filter: (qx: number, qy: number) => number): Float64Array {
  const random = createRandom(seed)
  const noise = new Float64Array(size * size)
  for (let i = 0; i < noise.length; i++) noise[i] = random.normal()
  const spectrum = fft2d(noise, size, size)
  for (let ky = 0; ky < size; ky++) {
    const qy = binFrequency(ky, size)
    for (let kx = 0; kx < size; kx++) {
      const w = ky === 0 && kx === 0 ? 0 : filter(binFrequency(kx, size), qy)
      spectrum.re[ky * size + kx] *= w
      spectrum.im[ky * size + kx] *= w
    }
  }
  return ifft2d(spectrum.re, spectrum.im, size, size).re
}

/** Ring filter around q0 = 1/period with relative width `relativeWidth`, optionally limited to directions near `angle`. */
function ringFilter(periodPx: number, relativeWidth: number, direction?: { angleRad: number; spreadRad: number }) {
  const q0 = 1 / periodPx
  const sq = relativeWidth * q0
  return (qx: number, qy: number): number => {
    const q = Math.hypot(qx, qy)
    let w = Math.exp(-((q - q0) ** 2) / (2 * sq * sq))
    if (direction !== undefined) {
      // Angle between q and the stripe normal, folded to [−π/2, π/2] (q and −q describe the same stripes).
      let d = Math.atan2(qy, qx) - direction.angleRad
      d = Math.atan2(Math.sin(d), Math.cos(d))
      if (d > Math.PI / 2) d -= Math.PI
      if (d < -Math.PI / 2) d += Math.PI
      w *= Math.exp(-(d * d) / (2 * direction.spreadRad ** 2))
    }
    return w
  }
}

/** ±1 domain map from the sign of a field. */
function signMap(field: Float64Array): Float32Array {
  const d = new Float32Array(field.length)
  for (let i = 0; i < field.length; i++) d[i] = field[i] >= 0 ? 1 : -1
  return d
}

/**
 * Render one Kerr frame from a ±1 domain map (or any map in [−1, 1]) with relative contrast `contrast`.
 * @param noiseSeed seed of this frame's camera noise.
 */
export function renderKerrFrame(
  domains: Float32Array,
  size: number,
  contrast: number,
  noiseSeed: number,
  rendering: KerrRendering = DEFAULT_RENDERING,
): GrayImage {
  const blurred = gaussianBlur({ width: size, height: size, data: domains }, rendering.blurSigmaPx).data
  const random = createRandom(noiseSeed)
  const data = new Uint16Array(size * size)
  const [gx, gy] = rendering.gradient
  for (let y = 0; y < size; y++) {
    const illuminationY = gy * (y / (size - 1) - 0.5)
    for (let x = 0; x < size; x++) {
      const i = y * size + x
      const illumination = rendering.baseLevel * (1 + gx * (x / (size - 1) - 0.5) + illuminationY)
      const signal = illumination * (1 + 0.5 * contrast * blurred[i])
      const shotSd = Math.sqrt(Math.max(signal, 0) / rendering.electronsPerAdu)
      const value = rendering.bias + signal + random.normal(0, Math.hypot(shotSd, rendering.readNoiseAdu))
      data[i] = Math.min(65535, Math.max(0, Math.round(value)))
    }
  }
  return { width: size, height: size, data }
}

export interface LabyrinthOptions {
  /** Image side in px (power of two); default 512. */
  size?: number
  /** Labyrinth period λ in px (up + down width). */
  periodPx: number
  seed: number
  /** Relative Kerr contrast between up and down (default 0.1). */
  contrast?: number
}

/** The domain map of a labyrinth (1 = up, 0 = down), for ground truth. */
export function labyrinthDomains(size: number, periodPx: number, seed: number): Float32Array {
  return signMap(filteredNoise(size, seed, ringFilter(periodPx, 0.15)))
}

/** A remanent labyrinth of period `periodPx` as a 16-bit Kerr image. */
export function renderLabyrinth(options: LabyrinthOptions): { image: GrayImage; upFraction: number } {
  const size = options.size ?? 512
  const domains = labyrinthDomains(size, options.periodPx, options.seed)
  return {
    image: renderKerrFrame(domains, size, options.contrast ?? 0.1, options.seed + 1),
    upFraction: upFraction(domains),
  }
}

function upFraction(domains: Float32Array): number {
  let up = 0
  for (let i = 0; i < domains.length; i++) if (domains[i] > 0) up++
  return up / domains.length
}

export interface FieldSweepOptions {
  /** Image side in px (power of two); default 256. */
  size?: number
  seed: number
  /** Coercive field Hc in mT (μ0H); default 6. */
  coerciveFieldMT?: number
  /** Loop width parameter w of tanh((H ∓ Hc)/w) in mT; default 2.5. */
  loopWidthMT?: number
  /** Largest |field| in mT; default 20. */
  maxFieldMT?: number
  /** Field step in mT; default 2. */
  stepMT?: number
  /** Correlation length of the nucleation map in px; default 12. */
  correlationPx?: number
  contrast?: number
}

export interface FieldSweep {
  frames: GrayImage[]
  fieldsMT: number[]
  branch: ('descending' | 'ascending')[]
  /** The constructed M/Ms per frame (tanh loop). */
  magnetization: number[]
  /** M/Ms of the rendered domain map per frame (2·up fraction − 1), equal to `magnetization` within 2/size². */
  mapMagnetization: number[]
}

/** The field sequence: +max down to −max, then back up to +max (2·max/step·2 + 1 frames). */
export function sweepFields(maxFieldMT: number, stepMT: number): { fieldsMT: number[]; branch: ('descending' | 'ascending')[] } {
  const steps = Math.round(maxFieldMT / stepMT)
  const fieldsMT: number[] = []
  const branch: ('descending' | 'ascending')[] = []
  for (let k = 0; k <= 2 * steps; k++) {
    fieldsMT.push((steps - k) * stepMT)
    branch.push('descending')
  }
  for (let k = 1; k <= 2 * steps; k++) {
    fieldsMT.push((k - steps) * stepMT)
    branch.push('ascending')
  }
  return { fieldsMT, branch }
}

/** A field-sweep stack through a tanh hysteresis loop (see the file header). */
export function renderFieldSweep(options: FieldSweepOptions): FieldSweep {
  const size = options.size ?? 256
  const hc = options.coerciveFieldMT ?? 6
  const w = options.loopWidthMT ?? 2.5
  const correlation = options.correlationPx ?? 12
  const { fieldsMT, branch } = sweepFields(options.maxFieldMT ?? 20, options.stepMT ?? 2)
  // Gaussian low-pass with real-space correlation length ℓ: exp(−2π²ℓ²q²).
  const field = filteredNoise(size, options.seed, (qx, qy) => Math.exp(-2 * Math.PI ** 2 * correlation ** 2 * (qx * qx + qy * qy)))
  const n = size * size
  // Rank of each pixel, so thresholding at a rank gives an exact up fraction.
  const order = Array.from({ length: n }, (_, i) => i).sort((a, b) => field[a] - field[b] || a - b)
  const rank = new Float64Array(n)
  order.forEach((pixel, r) => (rank[pixel] = r / n))
  const frames: GrayImage[] = []
  const magnetization: number[] = []
  const mapMagnetization: number[] = []
  const domains = new Float32Array(n)
  fieldsMT.forEach((h, index) => {
    const m = Math.tanh((branch[index] === 'descending' ? h + hc : h - hc) / w)
    const threshold = 1 - (1 + m) / 2
    let up = 0
    for (let i = 0; i < n; i++) {
      domains[i] = rank[i] >= threshold ? 1 : -1
      if (domains[i] > 0) up++
    }
    magnetization.push(m)
    mapMagnetization.push((2 * up) / n - 1)
    frames.push(renderKerrFrame(domains, size, options.contrast ?? 0.1, options.seed + 1000 + index))
  })
  return { frames, fieldsMT, branch, magnetization, mapMagnetization }
}

export interface TemperatureRampOptions {
  /** Image side in px (power of two); default 256. */
  size?: number
  seed: number
  /** Stripe period in px; default 20. */
  periodPx?: number
  curieTemperatureK?: number
  beta?: number
  /** Contrast at T = 0 (c0); default 0.2. */
  contrastAtZero?: number
  /** Frame temperatures in K; default 300, 305, …, 420 (25 frames). */
  temperaturesK?: number[]
}

export interface TemperatureRamp {
  frames: GrayImage[]
  temperaturesK: number[]
  /** The constructed relative Kerr contrast per frame. */
  contrast: number[]
}

/** Relative contrast c0·(1 − T/Tc)^β below Tc, 0 at and above Tc. */
export function contrastAt(temperatureK: number, curieTemperatureK: number, beta: number, contrastAtZero: number): number {
  return temperatureK < curieTemperatureK ? contrastAtZero * (1 - temperatureK / curieTemperatureK) ** beta : 0
}

/** A temperature stack of fixed stripe domains whose contrast vanishes at Tc (see the file header). */
export function renderTemperatureRamp(options: TemperatureRampOptions): TemperatureRamp {
  const size = options.size ?? 256
  const tc = options.curieTemperatureK ?? 400
  const beta = options.beta ?? 0.35
  const c0 = options.contrastAtZero ?? 0.2
  const temperaturesK = options.temperaturesK ?? Array.from({ length: 25 }, (_, i) => 300 + 5 * i)
  const domains = signMap(
    filteredNoise(size, options.seed, ringFilter(options.periodPx ?? 20, 0.12, { angleRad: Math.PI / 6, spreadRad: 0.2 })),
  )
  const contrast = temperaturesK.map((t) => contrastAt(t, tc, beta, c0))
  const frames = contrast.map((c, index) => renderKerrFrame(domains, size, c, options.seed + 1000 + index))
  return { frames, temperaturesK, contrast }
}

/** The creep law ln v = ln v₀ − C·H^(−μ) of a constructed motion series (v in m/s, H as μ0H in mT). */
export interface CreepLawParameters {
  /** C, mT^μ. */
  slope: number
  /** ln(v₀ / (m/s)). */
  lnV0: number
  mu: number
}

export interface MotionSeriesOptions {
  /** Image side in px (power of two); default 256. */
  size?: number
  seed: number
  /** Pixel size in nm (converts the constructed velocities to px); default 200. */
  pixelSizeNm?: number
  /** Radius of the nucleated bubble in frame 0, px; default 24. */
  initialRadiusPx?: number
  /** Pulse field per frame row, μ0H in mT; row 0 is the nucleation pulse (not a motion step). */
  pulseFieldsMT?: number[]
  /** Pulse duration per frame row, s. */
  pulseDurationsS?: number[]
  /** Creep law giving each step's velocity; default C = 40 mT^¼, ln v₀ = 22.4, μ = ¼. */
  creep?: CreepLawParameters
  /** Self-affine wall: exponent ζ and the rms of the wall's radial deviation in the last frame (px); rms 0 = smooth. */
  roughness?: { zeta: number; rmsPx: number }
  /** Bubble centre in frame 0, px; default the image centre (+0.3, −0.2). */
  centre?: { x: number; y: number }
  /** Stage drift added per frame, px (the whole scene moves; the camera's illumination does not). */
  driftPx?: { x: number; y: number }
  /** Dust on the film (moves with it): Gaussian dark spots (σ 1.5 px) of relative depth up to `depth`. */
  dust?: { count: number; depth: number }
  contrast?: number
}

export interface MotionSeries {
  frames: GrayImage[]
  pulseFieldsMT: number[]
  pulseDurationsS: number[]
  /** Mean (construction) radius R_k of the bubble per frame, px. */
  radiiPx: number[]
  /** Constructed radial velocity ΔR/Δt of each step k − 1 → k (k = 1 …), m/s: the creep law at that step's field. */
  velocitiesMPerS: number[]
  /** ΔR of each step, px. */
  displacementsPx: number[]
  /** Wall length of the continuous constructed wall over 2πR, per frame (1 for a smooth bubble). */
  wallLengthExcess: number[]
}

/** Creep velocity exp(ln v₀ − C·H^(−μ)) in m/s. */
export function creepVelocity(fieldMT: number, law: CreepLawParameters): number {
  return Math.exp(law.lnV0 - law.slope * Math.pow(Math.abs(fieldMT), -law.mu))
}

/** Periodic self-affine deviation δ(θ) on `samples` angles: modes n ≥ 3 with amplitude ∝ n^(−(½ + ζ)), unit rms. */
function selfAffineRing(samples: number, zeta: number, maxMode: number, seed: number): Float64Array {
  const random = createRandom(seed)
  const out = new Float64Array(samples)
  for (let n = 3; n <= maxMode; n++) {
    const amplitude = Math.pow(n, -(0.5 + zeta))
    const phase = 2 * Math.PI * random()
    for (let k = 0; k < samples; k++) out[k] += amplitude * Math.cos((2 * Math.PI * n * k) / samples + phase)
  }
  let sum = 0
  for (let k = 0; k < samples; k++) sum += out[k] * out[k]
  const rms = Math.sqrt(sum / samples)
  if (rms > 0) for (let k = 0; k < samples; k++) out[k] /= rms
  return out
}

/**
 * A pulsed-field bubble-expansion series (polar Kerr, perpendicular film): a reversed bubble nucleated by the pulse of
 * row 0 grows by ΔR_k = v(H_k)·Δt_k in the pulse of row k, v from a creep law (constructed ground truth). The wall is
 * r(θ) = R_k + s_k·δ(θ) with δ a self-affine ring (modes n ≥ 3, ∝ n^(−(½ + ζ))) scaled by s_k = rms·(R_k/R_last)^ζ,
 * so that B(r) in px of arc is the same in every frame. The domain map is the up-area fraction of each pixel (4 × 4
 * sub-samples, the optics integrate over the pixel), rendered with renderKerrFrame (blur, gradient, noise).
 */
export function renderMotionSeries(options: MotionSeriesOptions): MotionSeries {
  const size = options.size ?? 256
  const pixelSizeNm = options.pixelSizeNm ?? 200
  const law = options.creep ?? { slope: 40, lnV0: 22.4, mu: 0.25 }
  const pulseFieldsMT = options.pulseFieldsMT ?? [12, 3, 3.5, 4, 5, 6, 7.5, 9]
  const pulseDurationsS = options.pulseDurationsS ?? [2e-6, 5000e-6, 2000e-6, 800e-6, 150e-6, 50e-6, 12e-6, 4e-6]
  if (pulseFieldsMT.length !== pulseDurationsS.length) throw new RangeError('renderMotionSeries: one field and one duration per frame row')
  const radiiPx = [options.initialRadiusPx ?? 24]
  const velocitiesMPerS: number[] = []
  const displacementsPx: number[] = []
  for (let k = 1; k < pulseFieldsMT.length; k++) {
    const v = creepVelocity(pulseFieldsMT[k], law)
    const step = (v * pulseDurationsS[k]) / (pixelSizeNm * 1e-9)
    velocitiesMPerS.push(v)
    displacementsPx.push(step)
    radiiPx.push(radiiPx[k - 1] + step)
  }
  const lastRadius = radiiPx[radiiPx.length - 1]
  const ringSamples = 4096
  const zeta = options.roughness?.zeta ?? 2 / 3
  const rms = options.roughness?.rmsPx ?? 0
  const ring = rms > 0 ? selfAffineRing(ringSamples, zeta, Math.round(Math.PI * lastRadius), options.seed + 500) : new Float64Array(ringSamples)
  const centre = options.centre ?? { x: size / 2 + 0.3, y: size / 2 - 0.2 }
  const drift = options.driftPx ?? { x: 0, y: 0 }
  const sub = 4
  const dustRandom = createRandom(options.seed + 700)
  const dust = Array.from({ length: options.dust?.count ?? 0 }, () => ({
    x: dustRandom() * size,
    y: dustRandom() * size,
    depth: (options.dust?.depth ?? 0) * (0.4 + 0.6 * dustRandom()),
  }))
  const frames: GrayImage[] = []
  const wallLengthExcess: number[] = []
  radiiPx.forEach((radius, k) => {
    const scale = rms * Math.pow(radius / lastRadius, zeta)
    const wall = (theta: number): number => {
      const t = ((theta / (2 * Math.PI)) * ringSamples + ringSamples) % ringSamples
      const i = Math.floor(t)
      const f = t - i
      return radius + scale * (ring[i % ringSamples] * (1 - f) + ring[(i + 1) % ringSamples] * f)
    }
    let length = 0
    for (let j = 0; j < ringSamples; j++) {
      const a = (2 * Math.PI * j) / ringSamples
      const b = (2 * Math.PI * (j + 1)) / ringSamples
      length += Math.hypot(wall(b) * Math.cos(b) - wall(a) * Math.cos(a), wall(b) * Math.sin(b) - wall(a) * Math.sin(a))
    }
    wallLengthExcess.push(length / (2 * Math.PI * radius))
    const cx = centre.x + k * drift.x
    const cy = centre.y + k * drift.y
    const domains = new Float32Array(size * size)
    for (let y = 0; y < size; y++) {
      for (let x = 0; x < size; x++) {
        let up = 0
        for (let sy = 0; sy < sub; sy++) {
          for (let sx = 0; sx < sub; sx++) {
            const px = x - 0.5 + (sx + 0.5) / sub - cx
            const py = y - 0.5 + (sy + 0.5) / sub - cy
            if (Math.hypot(px, py) <= wall(Math.atan2(py, px))) up++
          }
        }
        domains[y * size + x] = (2 * up) / (sub * sub) - 1
      }
    }
    const frame = renderKerrFrame(domains, size, options.contrast ?? 0.1, options.seed + 1000 + k)
    for (const spot of dust) {
      const sx = spot.x + k * drift.x
      const sy = spot.y + k * drift.y
      for (let y = Math.max(0, Math.floor(sy - 5)); y <= Math.min(size - 1, Math.ceil(sy + 5)); y++) {
        for (let x = Math.max(0, Math.floor(sx - 5)); x <= Math.min(size - 1, Math.ceil(sx + 5)); x++) {
          const i = y * size + x
          frame.data[i] = Math.round(frame.data[i] * (1 - spot.depth * Math.exp(-((x - sx) ** 2 + (y - sy) ** 2) / (2 * 1.5 ** 2))))
        }
      }
    }
    frames.push(frame)
  })
  return { frames, pulseFieldsMT, pulseDurationsS, radiiPx, velocitiesMPerS, displacementsPx, wallLengthExcess }
}

/** Every file that `npm run samples` writes into samples/ (besides manifest.json). */
export const SAMPLE_FILES = [
  'KB24-A200_remanent.tif',
  'KB24-A250_remanent.tif',
  'KB24-A300_remanent.tif',
  'KB24-A350_remanent.tif',
  'KB24-A300_field-sweep.tif',
  'KB24-A300_field-sweep.csv',
  'GF-7_temperature-ramp.tif',
  'GF-7_temperature-ramp.csv',
  'KB24-A300_bubble-growth.tif',
  'KB24-A300_bubble-growth.csv',
] as const

export type SampleName = (typeof SAMPLE_FILES)[number]
