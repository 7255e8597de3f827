/**
 * `npm run bench`: speed and memory of the analysis engine against the targets of the "Analysis engine" issue.
 *
 * (a) Single frame: the per-frame pipeline (`analyzeFrame`) on a generated 1024 × 1024 16-bit labyrinth, decode
 *     excluded, with recipe background 'none' (smoothing σ = 1 + Otsu + open/close clean-up + minimum-area filter +
 *     labelling of both phases + distance transform and local widths + wall length + FFT period + orientation +
 *     contrast). Timed in a fresh process: the first call, then the median of the steady-state runs, then every step
 *     on its own (same inputs) so the slow ones show.
 * (b) Stack: a 41-frame 1024 × 1024 16-bit field sweep written to a temporary TIFF with its frames CSV, analysed end to
 *     end (read the file, start the worker pool, decode and analyse every frame, loop and jumps) with the default
 *     recipe, in a fresh process; wall time and peak RSS (process.resourceUsage().maxRSS, which covers the worker
 *     threads, and the largest sampled memoryUsage().rss).
 * Targets (issue): single frame ≤ 100 ms median (stretch 75), first frame ≤ 300 ms, 41-frame stack ≤ 4 s, peak RSS
 * ≤ 300 MB.
 * Usage: tsx scripts/bench.ts [--json] [--runs N]   (N ≥ 15 steady-state runs, default 21)
 */
import { spawn } from 'node:child_process'
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs'
import { availableParallelism, cpus, tmpdir } from 'node:os'
import { join } from 'node:path'
import { fileURLToPath, pathToFileURL } from 'node:url'
import { analyzeFrame, intensityRange, histogramOnRange, measureMask, preprocessFrame, thresholdFromHistogram } from '../shared/analysis/analyzeFrame'
import { componentStatsBothPhases } from '../shared/analysis/connectedComponents'
import { featureTransformBothPhases } from '../shared/analysis/distanceTransform'
import { domainContrast } from '../shared/analysis/domainContrast'
import { domainSizeStats } from '../shared/analysis/domainSizes'
import { localDomainWidths } from '../shared/analysis/localWidth'
import { areaFractions } from '../shared/analysis/magnetization'
import { removeSmallDomains } from '../shared/analysis/minimumAreaFilter'
import { closeMask, openMask } from '../shared/analysis/morphology'
import { domainPeriod } from '../shared/analysis/powerSpectrumPeriod'
import { DEFAULT_RECIPE, normalizeRecipe, type AnalysisRecipe } from '../shared/analysis/recipe'
import { stripeOrientation } from '../shared/analysis/stripeOrientation'
import type { BinaryMask, GrayImage } from '../shared/analysis/types'
import { wallDensity } from '../shared/analysis/wallLength'
import { decodeFrame } from '../shared/imageio/decodeImage'
import { encodeTiff } from '../shared/imageio/encodeTiff'
import { parseFramesCsv, validateFramesCsv } from '../shared/imageio/framesCsv'
import { createAnalysisPool } from '../server/analysis/analysisPool'
import { analyzeStackInPool } from '../server/analysis/analyzeStackInPool'
import { filteredNoise, renderKerrFrame, renderLabyrinth, sweepFields } from './sampleImages'
import { ANALYSIS_PROCESS_ENV } from './processes'

const SIZE = 1024
const STACK_FRAMES = 41
/** Labyrinth period of the single frame, px (a typical Kerr maze at this sampling). */
const LABYRINTH_PERIOD_PX = 20
/** Fixed seeds so every run measures the same images. */
const LABYRINTH_SEED = 1024
const SWEEP_SEED = 4141

const TARGETS = { singleFrameMedianMs: 100, singleFrameStretchMs: 75, singleFrameFirstMs: 300, stackWallMs: 4000, peakRssMb: 300 }

/** Recipe of the single-frame measurement: the default one without background correction. */
const SINGLE_FRAME_RECIPE: AnalysisRecipe = normalizeRecipe({ background: 'none' })

interface SingleFrameResult {
  recipe: AnalysisRecipe
  singleFrameFirstMs: number
  singleFrameMedianMs: number
  singleFrameRuns: number
  /** Median of each step timed on its own, ms. */
  steps: Record<string, number>
}

interface StackResult {
  recipe: AnalysisRecipe
  frames: number
  poolSize: number
  /** Read + pool start + decode + analysis + loop, ms. */
  stackWallMs: number
  poolStartMs: number
  analysisMs: number
  peakRssMb: number
  peakSampledRssMb: number
}

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b)
  const m = sorted.length >> 1
  return sorted.length % 2 === 1 ? sorted[m] : 0.5 * (sorted[m - 1] + sorted[m])
}

const round1 = (ms: number) => Math.round(ms * 10) / 10

function timeIt(run: () => unknown): number {
  const start = performance.now()
  run()
  return performance.now() - start
}

/** Median time of `runs` calls of each step, steps interleaved so that slow drift affects them alike. */
function stepMedians(image: GrayImage, runs: number): Record<string, number> {
  const recipe = SINGLE_FRAME_RECIPE
  const pre = preprocessFrame(image, recipe)
  const { min, max } = intensityRange(pre)
  const threshold = thresholdFromHistogram(histogramOnRange(pre, min, max, 256), min, max)
  const binarize = (): BinaryMask => {
    const bits = new Uint8Array(pre.data.length)
    for (let i = 0; i < bits.length; i++) bits[i] = pre.data[i] > threshold ? 1 : 0
    return { width: pre.width, height: pre.height, data: bits }
  }
  const raw = binarize()
  const opened = openMask(raw)
  const closed = closeMask(opened)
  const mask = removeSmallDomains(closed, recipe.minDomainArea).mask
  const phases = componentStatsBothPhases(mask)
  const steps: [string, () => unknown][] = [
    ['smoothing (float copy + Gaussian σ=1)', () => preprocessFrame(image, recipe)],
    ['otsu (range + histogram + threshold)', () => {
      const r = intensityRange(pre)
      return thresholdFromHistogram(histogramOnRange(pre, r.min, r.max, 256), r.min, r.max)
    }],
    ['binarize', binarize],
    ['opening 3×3', () => openMask(raw)],
    ['closing 3×3', () => closeMask(opened)],
    ['minimum-area filter', () => removeSmallDomains(closed, recipe.minDomainArea)],
    ['area fractions', () => areaFractions(mask)],
    ['labelling both phases (sizes, no label image)', () => componentStatsBothPhases(mask)],
    ['domain sizes (ECD)', () => domainSizeStats(phases.up)],
    ['distance + feature transform (both phases)', () => featureTransformBothPhases(mask.data, mask.width, mask.height)],
    ['local widths (incl. distance transform)', () => localDomainWidths(mask)],
    ['FFT period', () => domainPeriod({ width: mask.width, height: mask.height, data: Float32Array.from(mask.data) })],
    ['orientation (structure tensor)', () => stripeOrientation(mask)],
    ['wall length (Crofton)', () => wallDensity(mask)],
    ['contrast', () => domainContrast(pre, mask)],
    ['measureMask (all measurements)', () => measureMask(mask, { pixelSizeNm: null, image: pre, threshold })],
  ]
  const times = new Map<string, number[]>(steps.map(([name]) => [name, []]))
  for (let r = 0; r < runs; r++) for (const [name, run] of steps) times.get(name)!.push(timeIt(run))
  return Object.fromEntries(steps.map(([name]) => [name, round1(median(times.get(name)!))]))
}

async function singleFrameChild(file: string, runs: number): Promise<SingleFrameResult> {
  const image = await decodeFrame(new Uint8Array(readFileSync(file)), file, 0)
  const context = { pixelSizeNm: null }
  const first = timeIt(() => analyzeFrame(image, SINGLE_FRAME_RECIPE, context))
  const steady: number[] = []
  for (let r = 0; r < runs; r++) steady.push(timeIt(() => analyzeFrame(image, SINGLE_FRAME_RECIPE, context)))
  return {
    recipe: SINGLE_FRAME_RECIPE,
    singleFrameFirstMs: round1(first),
    singleFrameMedianMs: round1(median(steady)),
    singleFrameRuns: runs,
    steps: stepMedians(image, runs),
  }
}

async function stackChild(file: string, csvFile: string): Promise<StackResult> {
  let peakSampled = process.memoryUsage().rss
  const sampler = setInterval(() => {
    peakSampled = Math.max(peakSampled, process.memoryUsage().rss)
  }, 10)
  const start = performance.now()
  const csv = validateFramesCsv(parseFramesCsv(readFileSync(csvFile, 'utf8')), STACK_FRAMES)
  const pool = createAnalysisPool()
  await pool.ready()
  const poolStarted = performance.now()
  const meta = { pixelSizeNm: null, fieldUnit: csv.fieldUnit ?? null, frames: csv.rows.map((r) => ({ field: r.field ?? null, temperatureK: null })) }
  // By path, as the job worker does: each analysis thread reads the frames it needs and no thread holds the file.
  const result = await analyzeStackInPool(pool, { path: file }, file, DEFAULT_RECIPE, meta)
  const end = performance.now()
  await pool.close()
  clearInterval(sampler)
  if (result.frames.length !== STACK_FRAMES || result.loop === null) throw new Error('the stack benchmark did not analyse every frame')
  return {
    recipe: DEFAULT_RECIPE,
    frames: result.frames.length,
    poolSize: pool.size,
    stackWallMs: Math.round(end - start),
    poolStartMs: Math.round(poolStarted - start),
    analysisMs: Math.round(end - poolStarted),
    peakRssMb: Math.round(process.resourceUsage().maxRSS / 1024),
    peakSampledRssMb: Math.round(peakSampled / 1024 / 1024),
  }
}

/**
 * A field sweep +20 → −20 → +20 mT in 2 mT steps (41 frames) through the tanh loop of scripts/sampleImages.ts
 * (Hc = 6 mT, w = 2.5 mT), with the per-pixel ranks taken from a typed-array sort so that 1024² stays quick.
 * Also the stack of scripts/benchQueue.ts.
 */
export function benchFieldSweep(): { frames: GrayImage[]; fieldsMT: number[] } {
  const n = SIZE * SIZE
  const field = filteredNoise(SIZE, SWEEP_SEED, (qx, qy) => Math.exp(-2 * Math.PI ** 2 * 12 ** 2 * (qx * qx + qy * qy)))
  const sorted = Float64Array.from(field).sort()
  const { fieldsMT, branch } = sweepFields(20, 2)
  const domains = new Float32Array(n)
  const frames = fieldsMT.map((h, index) => {
    const m = Math.tanh((branch[index] === 'descending' ? h + 6 : h - 6) / 2.5)
    const cut = sorted[Math.min(n - 1, Math.max(0, Math.round((1 - (1 + m) / 2) * n)))]
    for (let i = 0; i < n; i++) domains[i] = field[i] >= cut ? 1 : -1
    return renderKerrFrame(domains, SIZE, 0.1, SWEEP_SEED + 1000 + index)
  })
  return { frames, fieldsMT }
}

function runChild(args: string[]): Promise<unknown> {
  return new Promise((resolve, reject) => {
    const script = fileURLToPath(import.meta.url)
    // The environment of the job worker, which runs stacks in production (see ANALYSIS_PROCESS_ENV).
    const child = spawn(process.execPath, [...process.execArgv, script, ...args], { env: { ...process.env, ...ANALYSIS_PROCESS_ENV }, stdio: ['ignore', 'pipe', 'inherit'] })
    let out = ''
    child.stdout.on('data', (chunk: Buffer) => (out += chunk.toString()))
    child.on('error', reject)
    child.on('exit', (code) => {
      if (code !== 0) reject(new Error(`bench child ${args[1]} exited with ${code}`))
      else resolve(JSON.parse(out))
    })
  })
}

function status(value: number, target: number): string {
  return value <= target ? 'met' : 'missed'
}

function printTable(single: SingleFrameResult, stack: StackResult): void {
  const cpu = cpus()[0]?.model ?? 'unknown CPU'
  const lines = [
    `# Analysis engine benchmark`,
    '',
    `Node ${process.version}, ${availableParallelism()} logical CPU(s) (${cpu}).`,
    '',
    `Single frame: ${SIZE} × ${SIZE} 16-bit labyrinth (period ${LABYRINTH_PERIOD_PX} px), decode excluded, recipe = default with background 'none' (smoothing σ = ${single.recipe.smoothingSigma} px, Otsu, ${single.recipe.cleanup} clean-up, minimum area ${single.recipe.minDomainArea} px); median of ${single.singleFrameRuns} steady-state runs.`,
    `Stack: ${stack.frames} frames of ${SIZE} × ${SIZE} 16-bit (field sweep, TIFF + frames CSV), default recipe (background '${stack.recipe.background}', σ = ${stack.recipe.flattenSigma} px), end to end through a pool of ${stack.poolSize} worker thread(s).`,
    '',
    '| measure | result | target | status |',
    '|---|---:|---:|---|',
    `| single frame, median | ${single.singleFrameMedianMs} ms | ≤ ${TARGETS.singleFrameMedianMs} ms (stretch ${TARGETS.singleFrameStretchMs}) | ${status(single.singleFrameMedianMs, TARGETS.singleFrameMedianMs)} |`,
    `| single frame, first call in a fresh process | ${single.singleFrameFirstMs} ms | ≤ ${TARGETS.singleFrameFirstMs} ms | ${status(single.singleFrameFirstMs, TARGETS.singleFrameFirstMs)} |`,
    `| ${stack.frames}-frame stack, wall time (of which pool start ${stack.poolStartMs} ms) | ${stack.stackWallMs} ms | ≤ ${TARGETS.stackWallMs} ms | ${status(stack.stackWallMs, TARGETS.stackWallMs)} |`,
    `| peak RSS during the stack (maxRSS; sampled ${stack.peakSampledRssMb} MB) | ${stack.peakRssMb} MB | ≤ ${TARGETS.peakRssMb} MB | ${status(stack.peakRssMb, TARGETS.peakRssMb)} |`,
    '',
    '## Single-frame steps (each timed on its own, median)',
    '',
    '| step | median |',
    '|---|---:|',
    ...Object.entries(single.steps).map(([name, ms]) => `| ${name} | ${ms} ms |`),
  ]
  process.stdout.write(`${lines.join('\n')}\n`)
}

async function main(): Promise<void> {
  const args = process.argv.slice(2)
  const runsFlag = args.indexOf('--runs')
  const runs = runsFlag >= 0 ? Math.max(15, Number(args[runsFlag + 1]) || 0) : 21
  if (args[0] === '--child') {
    const result = args[1] === 'single' ? await singleFrameChild(args[2], runs) : await stackChild(args[2], args[3])
    process.stdout.write(JSON.stringify(result))
    return
  }
  const json = args.includes('--json')
  const folder = mkdtempSync(join(tmpdir(), 'remanence-bench-'))
  try {
    if (!json) console.warn('Generating the test images…')
    const { image } = renderLabyrinth({ size: SIZE, periodPx: LABYRINTH_PERIOD_PX, seed: LABYRINTH_SEED })
    const frameFile = join(folder, 'labyrinth-1024.tif')
    writeFileSync(frameFile, encodeTiff([image]))
    const sweep = benchFieldSweep()
    const stackFile = join(folder, 'field-sweep-41x1024.tif')
    const csvFile = join(folder, 'field-sweep-41x1024.csv')
    writeFileSync(stackFile, encodeTiff(sweep.frames))
    writeFileSync(csvFile, `frame,field_mT\n${sweep.fieldsMT.map((h, i) => `${i},${h}`).join('\n')}\n`)
    if (!json) console.warn('Timing one frame…')
    const single = (await runChild(['--child', 'single', frameFile, '--runs', String(runs)])) as SingleFrameResult
    if (!json) console.warn('Timing the stack…')
    const stack = (await runChild(['--child', 'stack', stackFile, csvFile])) as StackResult
    if (json) {
      const { steps, ...singleRest } = single
      const { recipe: stackRecipe, ...stackRest } = stack
      process.stdout.write(`${JSON.stringify({ node: process.version, cpus: availableParallelism(), size: SIZE, ...singleRest, stepMediansMs: steps, stackRecipe, ...stackRest, targets: TARGETS }, null, 2)}\n`)
    } else {
      printTable(single, stack)
    }
  } finally {
    rmSync(folder, { recursive: true, force: true })
  }
}

// Run only as a script (and as its own --child): scripts/benchQueue.ts imports benchFieldSweep.
if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  main().catch((err: unknown) => {
    console.error(err instanceof Error ? err.message : err)
    process.exit(1)
  })
}

