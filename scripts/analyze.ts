/**
 * `npm run --silent analyze -- <file> [options]`: analyse a domain image or stack from the command line with the same
 * engine as the web app, and print a table with units or (with --json) the analysis report (shared/analysis/
 * analysisReport.ts). Stacks of more than one frame go through the worker pool (server/analysis/analysisPool.ts).
 *
 * Options:
 *   --pixel-size <length>      pixel size, e.g. 12.5nm or 0.8um (overrides the TIFF tags)
 *   --method otsu|kmeans       segmentation (default otsu)
 *   --classes 2|3              k-means classes (default 2)
 *   --frames <csv>             per-frame field, temperature, or pulse field and duration (a motion series: adds the
 *                              wall velocities, creep fit and roughness; default: <file name>.csv next to the file)
 *   --min-area <px>            smallest domain kept, px (default 9)
 *   --background none|flatten|reference   background correction (default flatten)
 *   --reference-frame <N>      reference frame for --background reference (0-based)
 *   --smoothing <σ>            Gaussian smoothing before thresholding, px (default 1)
 *   --per-frame-threshold      Otsu per frame instead of one threshold for the stack
 *   --register                 correct drift between frames by phase correlation
 *   --json                     print the JSON report
 * A single image goes through the single-frame pipeline (`analyzeFrame`, its own Otsu threshold), as in the web app.
 * Errors go to stderr with the file name; the exit status is 1 for a file or analysis error, 2 for a bad option.
 */
import { existsSync, readFileSync, statSync } from 'node:fs'
import { basename, dirname, extname, join } from 'node:path'
import { analyzeFrame } from '../shared/analysis/analyzeFrame'
import { analyzeMotion, motionRecipeDefaults, type MotionAnalysis } from '../shared/analysis/analyzeMotion'
import type { StackMeta, StackResults } from '../shared/analysis/analyzeStack'
import { buildAnalysisReport, formatAnalysisReport, reportNumber } from '../shared/analysis/analysisReport'
import { ENGINE_VERSION } from '../shared/analysis/engineVersion'
import { BACKGROUND_MODES, SEGMENTATION_METHODS, normalizeRecipe, type AnalysisRecipe } from '../shared/analysis/recipe'
import { decodeFrame, probeImage, type ImageHeader } from '../shared/imageio/decodeImage'
import { parseFramesCsv, validateFramesCsv, type ValidatedFramesCsv } from '../shared/imageio/framesCsv'
import { formatLength, parseLength } from '../shared/units/lengthUnits'
import { FIELD_UNITS, convertField, type FieldUnit } from '../shared/units/magneticUnits'
import { createAnalysisPool } from '../server/analysis/analysisPool'
import { readFileShared } from '../server/analysis/readFileShared'
import { analyzeStackInPool } from '../server/analysis/analyzeStackInPool'

/** A mistake in the command line (exit status 2). */
class UsageError extends Error {}

interface CliOptions {
  file: string
  pixelSizeNm: number | null
  framesCsv: string | null
  json: boolean
  recipe: Partial<AnalysisRecipe>
}

const USAGE =
  'usage: npm run --silent analyze -- <file> [--pixel-size 12.5nm] [--method otsu|kmeans] [--classes 2|3] [--frames <csv>] ' +
  '[--min-area <px>] [--background none|flatten|reference] [--reference-frame N] [--smoothing σ] [--per-frame-threshold] ' +
  '[--register] [--json]'

const VALUE_OPTIONS = ['--pixel-size', '--method', '--classes', '--frames', '--min-area', '--background', '--reference-frame', '--smoothing'] as const
const FLAG_OPTIONS = ['--per-frame-threshold', '--register', '--json'] as const

function numberOption(name: string, text: string, integer: boolean): number {
  const value = Number(text)
  if (text.trim() === '' || !Number.isFinite(value) || (integer && !Number.isInteger(value))) {
    throw new UsageError(`${name} needs ${integer ? 'a whole number' : 'a number'}, got "${text}".`)
  }
  return value
}

function oneOf<T extends string>(name: string, text: string, allowed: readonly T[]): T {
  if (!(allowed as readonly string[]).includes(text)) throw new UsageError(`${name} must be one of ${allowed.join(', ')}, got "${text}".`)
  return text as T
}

function parseArguments(args: string[]): CliOptions {
  const options: CliOptions = { file: '', pixelSizeNm: null, framesCsv: null, json: false, recipe: {} }
  const files: string[] = []
  // The first mistake is reported once the file is known, so the message can name it.
  let mistake: UsageError | null = null
  for (let i = 0; i < args.length; i++) {
    const name = args[i].startsWith('--') && args[i].includes('=') ? args[i].slice(0, args[i].indexOf('=')) : args[i]
    // An option written "--name value" uses the next argument too, whether or not the value is valid.
    const last = (VALUE_OPTIONS as readonly string[]).includes(name) && name === args[i] ? i + 1 : i
    try {
      parseArgument(args, i, options, files)
    } catch (err) {
      if (!(err instanceof UsageError)) throw err
      mistake ??= err
    }
    i = last
  }
  if (mistake !== null) throw files.length === 1 ? new UsageError(`"${files[0]}": ${mistake.message}`) : mistake
  if (files.length !== 1) throw new UsageError(files.length === 0 ? `no file given.\n${USAGE}` : `one file at a time (got ${files.join(', ')}).`)
  options.file = files[0]
  return options
}

/** Read the argument at `i` (and the value after it, for an option that takes one) into `options` or `files`. */
function parseArgument(args: string[], i: number, options: CliOptions, files: string[]): void {
  const arg = args[i]
  const [name, inline] = arg.startsWith('--') && arg.includes('=') ? [arg.slice(0, arg.indexOf('=')), arg.slice(arg.indexOf('=') + 1)] : [arg, undefined]
  if ((FLAG_OPTIONS as readonly string[]).includes(name)) {
    if (name === '--json') options.json = true
    else if (name === '--register') options.recipe.registerFrames = true
    else options.recipe.stackThreshold = 'per-frame'
    return
  }
  if ((VALUE_OPTIONS as readonly string[]).includes(name)) {
    const value = inline ?? args[i + 1]
    if (value === undefined) throw new UsageError(`${name} needs a value.`)
    switch (name) {
      case '--pixel-size':
        try {
          options.pixelSizeNm = parseLength(value)
        } catch (err) {
          throw new UsageError(`--pixel-size: ${(err as Error).message}`)
        }
        break
      case '--method':
        options.recipe.method = oneOf(name, value, SEGMENTATION_METHODS)
        break
      case '--classes':
        options.recipe.kmeansClasses = Number(oneOf(name, value, ['2', '3'] as const)) as 2 | 3
        break
      case '--frames':
        options.framesCsv = value
        break
      case '--min-area':
        options.recipe.minDomainArea = numberOption(name, value, true)
        break
      case '--background':
        options.recipe.background = oneOf(name, value, BACKGROUND_MODES)
        break
      case '--reference-frame':
        options.recipe.referenceFrame = numberOption(name, value, true)
        break
      case '--smoothing':
        options.recipe.smoothingSigma = numberOption(name, value, false)
        break
    }
    return
  }
  if (arg === '--help' || arg === '-h') throw new UsageError(USAGE)
  if (arg.startsWith('-')) throw new UsageError(`unknown option ${arg}.\n${USAGE}`)
  files.push(arg)
}

function readInput(file: string): Uint8Array {
  if (!existsSync(file)) throw new Error(`"${file}": no such file.`)
  if (!statSync(file).isFile()) throw new Error(`"${file}": not a file.`)
  // Read into shared memory: the worker pool then uses these bytes without copying them.
  return readFileShared(file)
}

/** The frames CSV: the one given, else `<name>.csv` beside the file when it exists. */
function framesTable(options: CliOptions, frameCount: number): { csv: ValidatedFramesCsv; path: string } | null {
  const path = options.framesCsv ?? join(dirname(options.file), `${basename(options.file, extname(options.file))}.csv`)
  if (options.framesCsv === null && !existsSync(path)) return null
  if (!existsSync(path)) throw new Error(`"${path}": no such frames CSV.`)
  try {
    return { csv: validateFramesCsv(parseFramesCsv(readFileSync(path, 'utf8')), frameCount), path }
  } catch (err) {
    throw new Error(`"${path}" does not fit "${options.file}": ${(err as Error).message}`)
  }
}

function stackMeta(header: ImageHeader, options: CliOptions, table: ValidatedFramesCsv | null): StackMeta {
  return {
    pixelSizeNm: options.pixelSizeNm ?? header.pixelSizeNm,
    fieldUnit: table?.fieldUnit ?? null,
    frames: Array.from({ length: header.frameCount }, (_, i) => ({ field: table?.rows[i]?.field ?? null, temperatureK: table?.rows[i]?.temperatureK ?? null })),
  }
}

/** A single image through the single-frame pipeline (its own threshold), a stack through the pool. */
async function analyse(bytes: Uint8Array, file: string, header: ImageHeader, recipe: AnalysisRecipe, meta: StackMeta): Promise<StackResults> {
  if (header.frameCount === 1) {
    const { measurements } = analyzeFrame(await decodeFrame(bytes, file, 0), recipe, { pixelSizeNm: meta.pixelSizeNm })
    return { threshold: null, frames: [measurements], loop: null, curie: null }
  }
  const pool = createAnalysisPool()
  try {
    return await analyzeStackInPool(pool, bytes, file, recipe, meta)
  } finally {
    await pool.close()
  }
}

const DASH = '–'

function fixed(value: number | null, digits: number): string {
  return value === null || !Number.isFinite(value) ? DASH : value.toFixed(digits)
}

function significant(value: number | null, digits = 4): string {
  return value === null || !Number.isFinite(value) ? DASH : String(Number(value.toPrecision(digits)))
}

function table(rows: string[][], rightAligned: boolean[]): string {
  const widths = rows[0].map((_, c) => Math.max(...rows.map((r) => r[c].length)))
  return rows.map((r) => r.map((cell, c) => (rightAligned[c] ? cell.padStart(widths[c]) : cell.padEnd(widths[c]))).join('  ').trimEnd()).join('\n')
}

function isFieldUnit(unit: string | null): unit is FieldUnit {
  return unit !== null && (FIELD_UNITS as readonly string[]).includes(unit)
}

function recipeLine(recipe: AnalysisRecipe): string {
  const parts = [recipe.method === 'kmeans' ? `k-means (${recipe.kmeansClasses} classes)` : 'Otsu']
  parts.push(recipe.background === 'flatten' ? `flat-field σ ${recipe.flattenSigma} px` : recipe.background === 'reference' ? `reference frame ${recipe.referenceFrame}` : 'no background correction')
  parts.push(recipe.smoothingSigma > 0 ? `smoothing σ ${recipe.smoothingSigma} px` : 'no smoothing')
  parts.push(`clean-up ${recipe.cleanup}`, `minimum area ${recipe.minDomainArea} px`)
  if (recipe.method === 'otsu') parts.push(recipe.stackThreshold === 'stack-wide' ? 'one threshold for the stack' : 'threshold per frame')
  if (recipe.registerFrames) parts.push('drift registered')
  return parts.join(', ')
}

function printTable(file: string, header: ImageHeader, options: CliOptions, recipe: AnalysisRecipe, meta: StackMeta, analysis: StackResults, csvPath: string | null): void {
  const nm = meta.pixelSizeNm
  const out: string[] = []
  out.push(`${file}: ${header.frameCount} frame(s) of ${header.width} × ${header.height} px, ${header.bitDepth}-bit ${header.format.toUpperCase()}`)
  out.push(`Engine ${ENGINE_VERSION}; recipe: ${recipeLine(recipe)}`)
  const source = options.pixelSizeNm !== null ? '--pixel-size' : header.pixelSizeSource === 'tiff-resolution' ? 'TIFF resolution tags' : 'TIFF image description'
  out.push(nm !== null ? `Pixel size: ${formatLength(nm)} (${source})` : 'Pixel size: unknown, lengths in px (give --pixel-size to convert)')
  if (csvPath !== null) out.push(`Frame conditions: ${csvPath}`)
  out.push('')
  const hasField = meta.frames.some((f) => f.field !== null)
  const hasTemperature = meta.frames.some((f) => f.temperatureK !== null)
  const lengthUnit = nm !== null ? 'nm' : 'px'
  const head = ['frame']
  if (hasField) head.push(`field (${meta.fieldUnit ?? '?'})`)
  if (hasTemperature) head.push('T (K)')
  head.push('M/Ms', 'domains', `mean width (${lengthUnit})`, `period (${lengthUnit})`, `wall density (${nm !== null ? 'µm⁻¹' : 'px⁻¹'})`)
  const rows = [head]
  analysis.frames.forEach((m, i) => {
    const row = [String(i)]
    if (hasField) row.push(significant(meta.frames[i].field, 6))
    if (hasTemperature) row.push(significant(meta.frames[i].temperatureK, 6))
    row.push(fixed(m.magnetization, 4), String(m.domainCount))
    row.push(nm !== null ? significant(m.meanWidthNm) : significant(m.meanWidthPx))
    row.push(nm !== null ? significant(m.periodNm) : significant(m.periodPx))
    row.push(nm !== null ? significant(m.wallDensityPerUm) : significant(m.wallDensityPerPx))
    rows.push(row)
  })
  out.push(table(rows, head.map((_, c) => c > 0)))
  const loop = analysis.loop
  if (loop !== null) {
    const unit = loop.fieldUnit ?? '(unknown unit)'
    out.push('', `Hysteresis loop (${loop.branches.length} branch(es), field in ${unit}):`)
    let hc = `  coercive field Hc = ${significant(loop.coerciveField)} ${unit}${loop.fieldUnit === 'mT' ? ' (μ0H)' : ''}`
    if (loop.coerciveField !== null && isFieldUnit(loop.fieldUnit)) {
      const from = loop.fieldUnit
      const others = FIELD_UNITS.filter((u) => u !== from).map((u) => `${significant(reportNumber(convertField(loop.coerciveField!, from, u)))} ${u}`)
      hc += ` = ${others.join(' = ')}`
    }
    out.push(hc)
    out.push(`  Hc− (descending) = ${significant(loop.coerciveFieldDescending)} ${unit}, Hc+ (ascending) = ${significant(loop.coerciveFieldAscending)} ${unit}, exchange bias H_E = ${significant(loop.exchangeBias)} ${unit}`)
    out.push(`  remanence Mr/Ms = ${fixed(loop.remanence, 4)}; squareness S = ${loop.saturated ? fixed(loop.squareness, 4) : `${DASH} (loop not saturated)`}`)
    const clusters = loop.jumps.reduce((sum, j) => sum + j.clusterSizesPx.length, 0)
    out.push(`  jumps: ${loop.jumps.length} frame steps, ${clusters} flipped clusters`)
    const fit = loop.jumpSizeFit
    if (fit !== null && fit.alpha !== null) {
      out.push(`  cluster sizes: power law α = ${significant(fit.alpha, 3)} ± ${significant(fit.alphaStdErr, 2)} above ${significant(fit.xMin)} px (${fit.nTail} of ${fit.n}; p = ${significant(fit.pValue, 2)})${fit.warning ? `; ${fit.warning}` : ''}`)
    }
  }
  const curie = analysis.curie
  if (curie !== null) {
    out.push('', `Curie fit (contrast on the mask of frame ${curie.maskFrame}, ${curie.usedPoints} points):`)
    out.push(`  Tc = ${significant(curie.tc, 5)} ± ${significant(curie.tcStdErr, 2)} K, β = ${significant(curie.beta, 3)} ± ${significant(curie.betaStdErr, 2)}${curie.converged ? '' : ' (fit did not converge)'}`)
    if (curie.warning) out.push(`  note: ${curie.warning}`)
  }
  process.stdout.write(`${out.join('\n')}\n`)
}

/** Recipe fields by the option that sets them, so a range error speaks of the option the user typed. */
const OPTION_OF: Record<string, string> = {
  'recipe.method': '--method',
  'recipe.kmeansClasses': '--classes',
  'recipe.background': '--background',
  'recipe.referenceFrame': '--reference-frame',
  'recipe.smoothingSigma': '--smoothing',
  'recipe.minDomainArea': '--min-area',
}

/** The file being analysed, for error messages. */
let currentFile: string | null = null

async function main(): Promise<void> {
  const options = parseArguments(process.argv.slice(2))
  currentFile = options.file
  let recipe: AnalysisRecipe
  try {
    recipe = normalizeRecipe(options.recipe)
  } catch (err) {
    throw new UsageError((err as Error).message.replace(/recipe\.[a-zA-Z]+/, (field) => OPTION_OF[field] ?? field))
  }
  const bytes = readInput(options.file)
  // A throwaway view: the parsed file the reader keeps per array is then dropped with it, not held beside the pool's.
  const header = await probeImage(bytes.subarray(0), options.file)
  const frames = framesTable(options, header.frameCount)
  const meta = stackMeta(header, options, frames?.csv ?? null)
  const analysis = await analyse(bytes, options.file, header, recipe, meta)
  const motion = frames !== null && (frames.csv.kind === 'motion' || frames.csv.kind === 'time') ? await analyseMotion(bytes, options, header, meta, frames.csv) : undefined
  if (options.json) process.stdout.write(formatAnalysisReport(buildAnalysisReport(analysis, { file: options.file, recipe, meta, motion })))
  else {
    printTable(options.file, header, options, recipe, meta, analysis, frames?.path ?? null)
    if (motion) printMotion(motion)
  }
}

/** A motion series: every frame decoded, registered and segmented with the motion defaults under the given options. */
async function analyseMotion(bytes: Uint8Array, options: CliOptions, header: ImageHeader, meta: StackMeta, csv: ValidatedFramesCsv): Promise<MotionAnalysis> {
  const recipe = normalizeRecipe({ ...motionRecipeDefaults(header.width, header.height), ...options.recipe })
  const frames = []
  for (let i = 0; i < header.frameCount; i++) frames.push(await decodeFrame(bytes, options.file, i))
  return analyzeMotion(frames, recipe, csv.rows, { pixelSizeNm: meta.pixelSizeNm, fieldUnit: csv.fieldUnit ?? null })
}

function printMotion(motion: MotionAnalysis): void {
  const out = ['', `Wall motion (${motion.steps.length} steps, velocity in ${motion.velocityUnit}, displacement ΔA/L̄):`]
  const rows = [[`field (${motion.fieldUnit ?? '?'})`, 'duration (s)', `displacement (${motion.pixelSizeNm !== null ? 'nm' : 'px'})`, `velocity (${motion.velocityUnit})`, '± SE']]
  for (const s of motion.steps) {
    rows.push([significant(s.field, 6), significant(s.duration), significant(s.displacementNm ?? s.displacementPx), significant(s.velocity), significant(s.velocityStdErr, 2)])
  }
  out.push(table(rows, rows[0].map(() => true)))
  const creep = motion.creep
  if (creep !== null) {
    out.push(`  creep law ln v = ln v0 − C·H^(−μ), H in ${creep.fieldUnit ?? '?'}: μ = ${significant(creep.mu, 3)}, C = ${significant(creep.slope)} ± ${significant(creep.slopeStdErr, 2)}, v0 = ${significant(creep.v0)} ${creep.velocityUnit}`)
    out.push(`  depinning field: ${creep.depinningField !== null ? `${significant(creep.depinningField)} ${creep.fieldUnit ?? ''}` : 'not reached'}`)
  }
  const r = motion.roughness
  if (r !== null) out.push(`  wall roughness (frame ${r.frame}): ζ = ${significant(r.zeta, 3)} ± ${significant(r.zetaStdErr, 2)} (theory ${significant(r.theory.zeta, 3)}), box-counting dimension ${significant(r.boxDimension, 3)}`)
  for (const note of motion.notes) out.push(`  note: ${note}`)
  process.stdout.write(`${out.join('\n')}\n`)
}

main().catch((err: unknown) => {
  let message = err instanceof Error ? err.message : String(err)
  if (currentFile !== null && !message.includes(`"${currentFile}"`)) message = `"${currentFile}": ${message}`
  console.error(`analyze: ${message}`)
  process.exit(err instanceof UsageError ? 2 : 1)
})
