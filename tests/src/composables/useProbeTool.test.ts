import { afterEach, describe, expect, it } from 'vitest'
import { ref } from 'vue'
import { useProbeTool, type ProbeResult } from '@/composables/useProbeTool'
import { stageHarness } from './stageHarness'

let harness: ReturnType<typeof stageHarness>
afterEach(() => harness.dispose())

/**
 * A vertical wall with an exact tanh profile: I(x) = 1000 + 400·tanh((x − 31.5)/3) in engine coordinates (pixel
 * centres on integers), i.e. the wall centre on the edge between columns 31 and 32.
 */
function wallFrame() {
  const width = 64
  const height = 16
  const data = new Float32Array(width * height)
  for (let y = 0; y < height; y++) for (let x = 0; x < width; x++) data[y * width + x] = 1000 + 400 * Math.tanh((x - 31.5) / 3)
  return { width, height, data }
}

describe('useProbeTool', () => {
  it('When a line is placed across a tanh wall with the keyboard, then the fit gives back its width and centre', () => {
    harness = stageHarness()
    const results: ProbeResult[] = []
    const frame = wallFrame()
    const tool = harness.run(() => useProbeTool(harness.stageRef, { enabled: ref(true), pointerPosition: harness.pointerPosition, frame: () => frame, onProbe: (r) => results.push(r) }))
    // Canvas coordinates: pixel i covers [i, i+1), so engine x = canvas x − ½; from x = 0.5 the line starts on column 0.
    tool.placePoint({ x: 0.5, y: 8.5 })
    expect(results).toHaveLength(0)
    tool.placePoint({ x: 63.5, y: 8.5 })
    expect(results).toHaveLength(1)
    const fit = results[0].fit!
    // METHODS.md check #46 [D]: a noise-free tanh profile returns its parameters (w = 3 px, centre 31.5 px).
    expect(fit.w).toBeCloseTo(3, 3)
    expect(fit.x0).toBeCloseTo(31.5, 3)
    expect(results[0].positions).toHaveLength(64)
  })

  it('When the frame is flat, then there is no fit to show', () => {
    harness = stageHarness()
    const flat = { width: 16, height: 16, data: new Uint16Array(256).fill(500) }
    const tool = harness.run(() => useProbeTool(harness.stageRef, { enabled: ref(true), pointerPosition: harness.pointerPosition, frame: () => flat }))
    expect(tool.probe({ start: { x: 1, y: 8 }, end: { x: 15, y: 8 } })?.fit).toBeNull()
  })
})
