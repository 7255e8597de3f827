/**
 * The command-line analysis (scripts/analyze.ts) run as a child process with tsx, as a user runs it: the JSON report
 * has the documented keys, two runs give byte-identical output, bad input fails with a non-zero exit and a message on
 * stderr naming the file, and without a calibration every length in nm is null.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { spawn } from 'node:child_process'
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { fileURLToPath } from 'node:url'
import { encodeTiff } from '../../shared/imageio/encodeTiff'
import { renderFieldSweep, renderMotionSeries } from '../../scripts/sampleImages'

const ROOT = fileURLToPath(new URL('../..', import.meta.url))
const TSX = join(ROOT, 'node_modules', '.bin', 'tsx')
/** CLI runs start tsx and, for stacks, worker threads: allow for a slow machine. */
const CLI_TIMEOUT = 120_000

interface Run {
  code: number | null
  stdout: string
  stderr: string
}

function runCli(args: string[]): Promise<Run> {
  return new Promise((resolve, reject) => {
    const child = spawn(TSX, ['scripts/analyze.ts', ...args], { cwd: ROOT, stdio: ['ignore', 'pipe', 'pipe'] })
    let stdout = ''
    let stderr = ''
    child.stdout.on('data', (chunk: Buffer) => (stdout += chunk.toString()))
    child.stderr.on('data', (chunk: Buffer) => (stderr += chunk.toString()))
    child.on('error', reject)
    child.on('close', (code) => resolve({ code, stdout, stderr }))
  })
}

describe('npm run analyze', () => {
  let folder: string
  let stack: string
  let first: Run

  beforeAll(async () => {
    folder = mkdtempSync(join(tmpdir(), 'remanence-cli-'))
    // A short field sweep (9 frames, +8 → −8 → +8 mT) without any resolution tags: no calibration. Seed fixed.
    const sweep = renderFieldSweep({ size: 64, seed: 91, maxFieldMT: 8, stepMT: 4, coerciveFieldMT: 2, loopWidthMT: 1 })
    stack = join(folder, 'sweep.tif')
    writeFileSync(stack, encodeTiff(sweep.frames))
    writeFileSync(join(folder, 'sweep.csv'), `frame,field_mT\n${sweep.fieldsMT.map((h, i) => `${i},${h}`).join('\n')}\n`)
    writeFileSync(join(folder, 'short.csv'), 'frame,field_mT\n0,1\n1,2\n')
    writeFileSync(join(folder, 'notes.tif'), 'these are my notes, not an image\n')
    first = await runCli([stack, '--json'])
  }, CLI_TIMEOUT)

  afterAll(() => {
    rmSync(folder, { recursive: true, force: true })
  })

  it('When --json is given, then stdout is one JSON report with the documented keys', () => {
    expect(first.code).toBe(0)
    const report = JSON.parse(first.stdout)
    expect(Object.keys(report)).toEqual(['file', 'engineVersion', 'recipe', 'pixelSizeNm', 'frames', 'loop', 'curie'])
    expect(report.file).toBe(stack)
    expect(report.frames).toHaveLength(9)
    expect(Object.keys(report.frames[0]).slice(0, 17)).toEqual([
      'index', 'width', 'height', 'field', 'temperature', 'threshold', 'upFraction', 'magnetization', 'domainCount',
      'meanWidthPx', 'meanWidthNm', 'periodPx', 'periodNm', 'wallDensityPerPx', 'wallDensityPerUm', 'orientationDeg', 'contrast',
    ])
    expect(report.frames.map((f: { field: number }) => f.field)).toEqual([8, 4, 0, -4, -8, -4, 0, 4, 8])
    expect(Object.keys(report.loop).slice(0, 10)).toEqual([
      'coerciveFieldDescending', 'coerciveFieldAscending', 'coerciveField', 'fieldUnit', 'coerciveFieldByUnit', 'remanence',
      'squareness', 'exchangeBias', 'saturated', 'jumps',
    ])
    expect(report.loop.fieldUnit).toBe('mT')
    expect(Object.keys(report.loop.jumps[0]).slice(0, 4)).toEqual(['fromFrame', 'toFrame', 'deltaM', 'clusterSizesPx'])
    expect(report.curie).toBeNull()
  })

  it('When the file carries no calibration, then pixelSizeNm and every …Nm and …PerUm value is null', () => {
    const report = JSON.parse(first.stdout)
    expect(report.pixelSizeNm).toBeNull()
    for (const frame of report.frames) {
      expect(frame.meanWidthNm).toBeNull()
      expect(frame.periodNm).toBeNull()
      expect(frame.wallDensityPerUm).toBeNull()
    }
    // Lengths in px are still there where the frame has domains of both phases.
    expect(report.frames.some((f: { meanWidthPx: number | null }) => f.meanWidthPx !== null)).toBe(true)
  })

  it('When the same file is analysed twice, then both outputs are byte-identical', async () => {
    const second = await runCli([stack, '--json'])
    expect(second.code).toBe(0)
    expect(second.stdout).toBe(first.stdout)
  }, CLI_TIMEOUT)

  it('When --pixel-size is given, then the lengths in nm are the px values times the pixel size', async () => {
    const run = await runCli([stack, '--json', '--pixel-size', '0.08um'])
    expect(run.code).toBe(0)
    const report = JSON.parse(run.stdout)
    expect(report.pixelSizeNm).toBe(80)
    const frame = report.frames.find((f: { periodPx: number | null }) => f.periodPx !== null)
    expect(frame.periodNm).toBeCloseTo(frame.periodPx * 80, 0)
  }, CLI_TIMEOUT)

  it('When the table is printed, then it has units and the loop summary with conversions', async () => {
    const run = await runCli([stack])
    expect(run.code).toBe(0)
    expect(run.stdout).toContain('field (mT)')
    expect(run.stdout).toContain('mean width (px)')
    expect(run.stdout).toContain('wall density (px⁻¹)')
    expect(run.stdout).toMatch(/coercive field Hc = .* mT \(μ0H\) = .* Oe = .* A\/m/)
  }, CLI_TIMEOUT)

  it.each<[string, () => string[], string, number]>([
    ['the file is not an image', () => [join(folder, 'notes.tif'), '--json'], 'notes.tif', 1],
    ['the file does not exist', () => [join(folder, 'missing.tif')], 'missing.tif', 1],
    ['the frames CSV does not match the frames', () => [stack, '--frames', join(folder, 'short.csv')], 'short.csv', 1],
    ['an option has a bad value', () => [stack, '--method', 'watershed'], 'sweep.tif', 2],
  ])('When %s, then the exit status is non-zero and stderr names the file', async (_case, args, named, status) => {
    const run = await runCli(args())
    expect(run.code).toBe(status)
    expect(run.stdout).toBe('')
    expect(run.stderr).toContain(named)
  }, CLI_TIMEOUT)
})

describe('npm run analyze with a motion series (issue #8)', () => {
  let folder: string
  let series: ReturnType<typeof renderMotionSeries>
  let run: Run

  beforeAll(async () => {
    folder = mkdtempSync(join(tmpdir(), 'remanence-cli-motion-'))
    // Constructed bubble growth (seed 5): 4 frames of 128² px, 200 nm pixels, radius 12 px growing by v(H)·Δt with the
    // creep law C = 40 mT^¼, ln v₀ = 22.4 (v ≈ 2.8 mm/s at 4 mT, 13 mm/s at 5 mT, 42 mm/s at 6 mT).
    series = renderMotionSeries({ size: 128, seed: 5, initialRadiusPx: 12, pulseFieldsMT: [10, 4, 5, 6], pulseDurationsS: [1e-6, 400e-6, 100e-6, 30e-6] })
    writeFileSync(join(folder, 'bubble.tif'), encodeTiff(series.frames, { pixelSizeNm: 200 }))
    const rows = series.pulseFieldsMT.map((h, i) => `${i},${h},${Number((series.pulseDurationsS[i] * 1e6).toPrecision(6))}`)
    writeFileSync(join(folder, 'pulses.csv'), `frame,pulse_field_mT,pulse_duration_us\n${rows.join('\n')}\n`)
    writeFileSync(join(folder, 'zero.csv'), 'frame,pulse_field_mT,pulse_duration_us\n0,10,1\n1,4,400\n2,5,0\n3,6,30\n')
    run = await runCli([join(folder, 'bubble.tif'), '--frames', join(folder, 'pulses.csv'), '--json'])
  }, CLI_TIMEOUT)

  afterAll(() => {
    rmSync(folder, { recursive: true, force: true })
  })

  it('When --frames gives pulse fields and durations, then "motion" has exactly the keys of the issue and the constructed velocities', () => {
    expect(run.code).toBe(0)
    const report = JSON.parse(run.stdout)
    expect(Object.keys(report)).toEqual(['file', 'engineVersion', 'recipe', 'pixelSizeNm', 'frames', 'loop', 'curie', 'motion'])
    expect(Object.keys(report.motion)).toEqual(['steps', 'creep', 'roughness'])
    expect(report.motion.steps).toHaveLength(3)
    for (const step of report.motion.steps) {
      expect(Object.keys(step)).toEqual(['fromFrame', 'toFrame', 'field', 'duration', 'displacementNm', 'velocity', 'velocityStdErr', 'velocityUnit'])
    }
    expect(Object.keys(report.motion.creep)).toEqual(['mu', 'slope', 'slopeStdErr', 'v0'])
    expect(Object.keys(report.motion.roughness)).toEqual(['zeta', 'zetaStdErr', 'boxDimension'])
    // Constructed: the pulse of row k drives the step k − 1 → k; durations converted from µs to s.
    expect(report.motion.steps.map((s: { field: number }) => s.field)).toEqual([4, 5, 6])
    expect(report.motion.steps[0].duration).toBeCloseTo(400e-6, 12)
    report.motion.steps.forEach((s: { velocity: number; velocityUnit: string }, k: number) => {
      expect(s.velocityUnit).toBe('m/s')
      expect(Math.abs(s.velocity / series.velocitiesMPerS[k] - 1)).toBeLessThan(0.03)
    })
    // Three distinct fields: the creep law is fitted (μ = ¼ by default).
    expect(report.motion.creep.mu).toBe(0.25)
  })

  it('When a pulse duration is zero, then the exit status is 1 and stderr names the CSV line', async () => {
    // Issue #8 bad input: a zero duration is refused by the frames CSV reader.
    const bad = await runCli([join(folder, 'bubble.tif'), '--frames', join(folder, 'zero.csv'), '--json'])
    expect(bad.code).toBe(1)
    expect(bad.stdout).toBe('')
    expect(bad.stderr).toContain('zero.csv')
    expect(bad.stderr).toMatch(/Line 4: pulse_duration_us must be greater than 0/)
  }, CLI_TIMEOUT)
})
