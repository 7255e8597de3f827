import { describe, expect, it } from 'vitest'
import { mount } from '@vue/test-utils'
import ImageScaleBar from '@/components/ImageScaleBar.vue'

function mountBar(pixelSizeNm: number | null, scale: number, targetPx?: number) {
  return mount(ImageScaleBar, { props: { pixelSizeNm, scale, ...(targetPx === undefined ? {} : { targetPx }) }, attachTo: document.body })
}

/** What a person sees: the label, and the bar's drawn length in screen px. */
function shown(wrapper: ReturnType<typeof mountBar>): { label: string; widthPx: number } {
  const bar = wrapper.get('[aria-label="Scale bar"]')
  const width = bar.get<HTMLElement>('.image-scale-bar__bar').element.style.width
  expect(width).toMatch(/^[\d.]+px$/)
  return { label: bar.get('.image-scale-bar__label').text(), widthPx: parseFloat(width) }
}

/** Screen px of a length of `um` µm on an image of `pixelSizeNm` nm per pixel shown at `zoom` screen px per image px. */
const screenPx = (um: number, pixelSizeNm: number, zoom: number) => ((um * 1000) / pixelSizeNm) * zoom

describe('ImageScaleBar', () => {
  it('When an 80 nm/px Kerr image is shown at 100 %, then the bar reads 5 µm and is 5·1000/80 = 62.5 screen px long', () => {
    const { label, widthPx } = shown(mountBar(80, 1))
    expect(label).toBe('5 µm')
    expect(widthPx).toBeCloseTo(screenPx(5, 80, 1), 9)
    expect(widthPx).toBeCloseTo(62.5, 9)
    // The next round length (1-2-5 steps), 10 µm, would be 125 px: longer than the 120 px the bar aims for.
    expect(screenPx(10, 80, 1)).toBeGreaterThan(120)
  })

  it('When the same image is zoomed to 200 %, then the bar steps down to 2 µm, drawn 2·1000/80·2 = 50 px long', () => {
    const { label, widthPx } = shown(mountBar(80, 2))
    expect(label).toBe('2 µm')
    expect(widthPx).toBeCloseTo(screenPx(2, 80, 2), 9)
    expect(widthPx).toBeCloseTo(50, 9)
    // 5 µm at 200 % would be 125 px, over the target.
    expect(screenPx(5, 80, 2)).toBeGreaterThan(120)
  })

  it('When the image is zoomed out to 25 %, then the bar reads 20 µm, drawn 20·1000/80·0.25 = 62.5 px long', () => {
    const { label, widthPx } = shown(mountBar(80, 0.25))
    expect(label).toBe('20 µm')
    expect(widthPx).toBeCloseTo(screenPx(20, 80, 0.25), 9)
    expect(screenPx(50, 80, 0.25)).toBeGreaterThan(120)
  })

  it('When a fine MFM scan of 5 nm/px is shown at 100 %, then the bar reads in nm: 500 nm over 500/5 = 100 px', () => {
    const { label, widthPx } = shown(mountBar(5, 1))
    expect(label).toBe('500 nm')
    expect(widthPx).toBeCloseTo(500 / 5, 9)
    // 1 µm would be 200 px.
    expect(screenPx(1, 5, 1)).toBeGreaterThan(120)
  })

  it('When a round length fits the target exactly, then that length is taken (10 µm at 100 nm/px and a 100 px target is 100 px)', () => {
    const { label, widthPx } = shown(mountBar(100, 1, 100))
    expect(label).toBe('10 µm')
    expect(widthPx).toBeCloseTo(screenPx(10, 100, 1), 9)
  })

  it('When the bar would be 1000 nm long, then it reads 1 µm rather than 1000 nm', () => {
    // 20 nm/px at 200 %: 120 screen px cover 120·20/2 = 1200 nm, so 1000 nm (1·1000/20·2 = 100 px); 2 µm would be 200 px.
    const { label, widthPx } = shown(mountBar(20, 2))
    expect(label).toBe('1 µm')
    expect(widthPx).toBeCloseTo(screenPx(1, 20, 2), 9)
  })

  it('When the image has no calibration (or no usable size or zoom), then no bar is drawn rather than a guessed one', () => {
    expect(mountBar(null, 1).find('[aria-label="Scale bar"]').exists()).toBe(false)
    expect(mountBar(0, 1).find('[aria-label="Scale bar"]').exists()).toBe(false)
    expect(mountBar(80, 0).find('[aria-label="Scale bar"]').exists()).toBe(false)
    expect(mountBar(Number.NaN, 1).find('[aria-label="Scale bar"]').exists()).toBe(false)
  })
})
