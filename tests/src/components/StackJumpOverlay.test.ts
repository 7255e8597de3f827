import { beforeEach, describe, expect, it, onTestFinished, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import type { BinaryMask } from '@shared/analysis/types'
import { maskToBase64 } from '@shared/imageio/maskEncoding'
import StackJumpOverlay from '@/components/StackJumpOverlay.vue'
import { OVERLAY_COLORS } from '@/jumpDifferenceOverlay'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'

const RUN_ID = 7
const WIDTH = 12
const HEIGHT = 9

type Point = { x: number; y: number }

/** Up (1) inside a disc, down (0) outside, on a 12 × 9 grid; `ignored` pixels are marked in the ignore plane. */
function disc(centre: Point, radius: number, ignored?: (p: Point) => boolean): BinaryMask {
  const data = new Uint8Array(WIDTH * HEIGHT)
  const ignore = new Uint8Array(WIDTH * HEIGHT)
  for (let y = 0; y < HEIGHT; y++) {
    for (let x = 0; x < WIDTH; x++) {
      data[y * WIDTH + x] = inDisc({ x, y }, centre, radius) ? 1 : 0
      ignore[y * WIDTH + x] = ignored?.({ x, y }) ? 1 : 0
    }
  }
  return ignored ? { width: WIDTH, height: HEIGHT, data, ignore } : { width: WIDTH, height: HEIGHT, data }
}

function inDisc(p: Point, centre: Point, radius: number): boolean {
  return (p.x - centre.x) ** 2 + (p.y - centre.y) ** 2 <= radius ** 2
}

/**
 * The frames of a constructed jump in sample KB24-A300: a bubble domain of radius 2.5 px at (4, 4) that moves to
 * (6, 4) and grows to radius 3 px. Geometrically, the pixels inside the old disc but outside the new one flipped
 * up → down, those inside the new disc but outside the old one down → up.
 */
const OLD = { centre: { x: 4, y: 4 }, radius: 2.5 }
const NEW = { centre: { x: 6, y: 4 }, radius: 3 }

function expectedFlips(ignored: (p: Point) => boolean = () => false): { upToDown: Set<string>; downToUp: Set<string> } {
  const upToDown = new Set<string>()
  const downToUp = new Set<string>()
  for (let y = 0; y < HEIGHT; y++) {
    for (let x = 0; x < WIDTH; x++) {
      const p = { x, y }
      if (ignored(p)) continue
      const wasUp = inDisc(p, OLD.centre, OLD.radius)
      const isUp = inDisc(p, NEW.centre, NEW.radius)
      if (wasUp && !isUp) upToDown.add(`${x},${y}`)
      if (!wasUp && isUp) downToUp.add(`${x},${y}`)
    }
  }
  return { upToDown, downToUp }
}

/** The masks a run stored, answered as GET /api/stack-runs/:id/frames/:index/mask does. */
function maskRoutes(masks: Record<number, BinaryMask>): Record<string, () => Response> {
  return Object.fromEntries(Object.entries(masks).map(([index, mask]) => [`GET /api/stack-runs/${RUN_ID}/frames/${index}/mask`, () => jsonResponse(200, { mask: maskToBase64(mask) })]))
}

/** Every image the component puts on its canvas, as it was drawn. */
function recordDrawnImages(): ImageData[] {
  const drawn: ImageData[] = []
  const original = CanvasRenderingContext2D.prototype.putImageData
  const spy = vi.spyOn(CanvasRenderingContext2D.prototype, 'putImageData').mockImplementation(function (this: CanvasRenderingContext2D, image: ImageData, x: number, y: number) {
    drawn.push(image)
    Reflect.apply(original, this, [image, x, y])
  })
  onTestFinished(() => spy.mockRestore())
  return drawn
}

/** Pixels of a drawn image in a given colour, as "x,y". */
function pixelsOf(image: ImageData, color: readonly number[]): Set<string> {
  const found = new Set<string>()
  for (let i = 0; i < image.width * image.height; i++) {
    const [r, g, b] = image.data.subarray(i * 4, i * 4 + 3)
    if (r === color[0] && g === color[1] && b === color[2]) found.add(`${i % image.width},${Math.floor(i / image.width)}`)
  }
  return found
}

let pinia: Pinia
beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

function mountOverlay(fromFrame: number, toFrame: number) {
  return mount(StackJumpOverlay, { props: { runId: RUN_ID, fromFrame, toFrame }, global: { plugins: [pinia, ElementPlus] }, attachTo: document.body })
}

describe('StackJumpOverlay', () => {
  it('When a bubble moves and grows between two frames, then exactly the pixels it left are drawn as up → down and those it reached as down → up', async () => {
    stubFetch(maskRoutes({ 14: disc(OLD.centre, OLD.radius), 15: disc(NEW.centre, NEW.radius) }))
    const drawn = recordDrawnImages()
    const wrapper = mountOverlay(14, 15)
    await flushPromises()

    const expected = expectedFlips()
    // The constructed jump really has flips both ways (the trailing edge of the bubble and its leading edge).
    expect(expected.upToDown.size).toBeGreaterThan(0)
    expect(expected.downToUp.size).toBeGreaterThan(expected.upToDown.size)

    const canvas = wrapper.get('canvas')
    expect(canvas.isVisible()).toBe(true)
    expect([(canvas.element as HTMLCanvasElement).width, (canvas.element as HTMLCanvasElement).height]).toEqual([WIDTH, HEIGHT])
    expect(drawn).toHaveLength(1)
    expect([drawn[0].width, drawn[0].height]).toEqual([WIDTH, HEIGHT])
    expect(pixelsOf(drawn[0], OVERLAY_COLORS.upToDown)).toEqual(expected.upToDown)
    expect(pixelsOf(drawn[0], OVERLAY_COLORS.downToUp)).toEqual(expected.downToUp)

    // The counts a person reads under the image and a screen reader hears.
    expect(canvas.attributes('aria-label')).toBe(`Flipped pixels from frame 14 to 15: ${expected.upToDown.size} up to down, ${expected.downToUp.size} down to up`)
    const counts = wrapper.findAll('figcaption > span')
    expect(counts.map((c) => c.text())).toEqual([`${expected.upToDown.size} px`, `${expected.downToUp.size} px`])
    expect(counts.map((c) => c.attributes('title'))).toEqual([`${expected.upToDown.size} px flipped up → down`, `${expected.downToUp.size} px flipped down → up`])
  })

  it('When the stored masks mark pixels as ignored, then those pixels are not shown or counted as flipped', async () => {
    // The left four columns are ignored in the "before" frame (say, dust on the garnet GF-7 indicator film).
    const ignored = (p: Point) => p.x < 4
    stubFetch(maskRoutes({ 2: disc(OLD.centre, OLD.radius, ignored), 3: disc(NEW.centre, NEW.radius) }))
    const drawn = recordDrawnImages()
    const wrapper = mountOverlay(2, 3)
    await flushPromises()

    const expected = expectedFlips(ignored)
    const all = expectedFlips()
    // The ignored band removes some of the trailing edge's flips.
    expect(expected.upToDown.size).toBeLessThan(all.upToDown.size)
    expect(pixelsOf(drawn[0], OVERLAY_COLORS.upToDown)).toEqual(expected.upToDown)
    expect(pixelsOf(drawn[0], OVERLAY_COLORS.downToUp)).toEqual(expected.downToUp)
    expect(pixelsOf(drawn[0], OVERLAY_COLORS.ignored).size).toBe(4 * HEIGHT)
    expect(wrapper.get('canvas').attributes('aria-label')).toBe(`Flipped pixels from frame 2 to 3: ${expected.upToDown.size} up to down, ${expected.downToUp.size} down to up`)
  })

  it('When the jump shown changes, then the masks of the new frames are fetched and their flips replace the old ones', async () => {
    // Frames 20 → 21 are the constructed jump; 21 → 22 is the same bubble shrinking back to its old place.
    const requests = stubFetch(maskRoutes({ 20: disc(OLD.centre, OLD.radius), 21: disc(NEW.centre, NEW.radius), 22: disc(OLD.centre, OLD.radius) }))
    const wrapper = mountOverlay(20, 21)
    await flushPromises()
    const forward = expectedFlips()

    await wrapper.setProps({ fromFrame: 21, toFrame: 22 })
    await flushPromises()
    // Going back swaps the directions: what flipped down → up now flips up → down.
    expect(wrapper.get('canvas').attributes('aria-label')).toBe(`Flipped pixels from frame 21 to 22: ${forward.downToUp.size} up to down, ${forward.upToDown.size} down to up`)
    // Frame 21's mask was fetched once and kept: it is the "after" of one jump and the "before" of the next.
    expect(requests.map((r) => r.url).sort()).toEqual([20, 21, 22].map((i) => `/api/stack-runs/${RUN_ID}/frames/${i}/mask`))
  })

  it('When the jump shown changes while the old masks are still on their way, then their late answer does not replace the new overlay', async () => {
    let answerOld: (response: Response) => void = () => {}
    stubFetch({
      [`GET /api/stack-runs/${RUN_ID}/frames/0/mask`]: () => new Promise<Response>((resolve) => (answerOld = resolve)),
      ...maskRoutes({ 1: disc(NEW.centre, NEW.radius), 2: disc(OLD.centre, OLD.radius), 3: disc(OLD.centre, OLD.radius) }),
    })
    const wrapper = mountOverlay(0, 1)
    await flushPromises()
    await wrapper.setProps({ fromFrame: 2, toFrame: 3 })
    await flushPromises()
    // Frames 2 and 3 hold the same mask: nothing flipped.
    const label = 'Flipped pixels from frame 2 to 3: 0 up to down, 0 down to up'
    expect(wrapper.get('canvas').attributes('aria-label')).toBe(label)

    answerOld(jsonResponse(200, { mask: maskToBase64(disc(OLD.centre, OLD.radius)) }))
    await flushPromises()
    expect(wrapper.get('canvas').attributes('aria-label')).toBe(label)
  })

  it('While the masks are on their way, then an empty placeholder and the word "Difference" are shown', async () => {
    let answer: (response: Response) => void = () => {}
    stubFetch({
      [`GET /api/stack-runs/${RUN_ID}/frames/0/mask`]: () => new Promise<Response>((resolve) => (answer = resolve)),
      ...maskRoutes({ 1: disc(NEW.centre, NEW.radius) }),
    })
    const wrapper = mountOverlay(0, 1)
    await flushPromises()
    expect(wrapper.get('canvas').isVisible()).toBe(false)
    expect(wrapper.find('.stack-jump-overlay__placeholder').exists()).toBe(true)
    expect(wrapper.get('figcaption').text()).toBe('Difference')

    answer(jsonResponse(200, { mask: maskToBase64(disc(OLD.centre, OLD.radius)) }))
    await flushPromises()
    expect(wrapper.get('canvas').isVisible()).toBe(true)
    expect(wrapper.find('.stack-jump-overlay__placeholder').exists()).toBe(false)
  })

  it('When the two masks differ in size, then no overlay is drawn and the reason is given', async () => {
    const small: BinaryMask = { width: 4, height: 3, data: new Uint8Array(12) }
    stubFetch(maskRoutes({ 5: disc(OLD.centre, OLD.radius), 6: small }))
    const drawn = recordDrawnImages()
    const wrapper = mountOverlay(5, 6)
    await flushPromises()
    expect(wrapper.get('.stack-jump-overlay__problem').text()).toBe('The two masks differ in size.')
    expect(wrapper.get('canvas').isVisible()).toBe(false)
    expect(wrapper.get('figcaption').text()).toBe('Difference')
    expect(drawn).toHaveLength(0)
  })

  it('When a mask cannot be fetched, then the server’s reason is shown in place of the overlay', async () => {
    stubFetch({
      ...maskRoutes({ 8: disc(OLD.centre, OLD.radius) }),
      [`GET /api/stack-runs/${RUN_ID}/frames/9/mask`]: () => errorResponse(404, 'not-found', 'Frame 9 of this run has no stored mask.'),
    })
    const wrapper = mountOverlay(8, 9)
    await flushPromises()
    expect(wrapper.get('.stack-jump-overlay__problem').text()).toBe('Frame 9 of this run has no stored mask.')
    expect(wrapper.get('canvas').isVisible()).toBe(false)
  })
})
