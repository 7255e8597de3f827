import { describe, expect, it } from 'vitest'
import { mount } from '@vue/test-utils'
import ImagePixelReadout from '@/components/ImagePixelReadout.vue'

interface ReadoutProps {
  pixel: { x: number; y: number } | null
  value: number | null
  pixelSizeNm: number | null
  floatValues: boolean
}

function mountReadout(props: ReadoutProps) {
  return mount(ImagePixelReadout, { props, attachTo: document.body })
}

/** The readout's parts as a person reads them, left to right. */
function parts(wrapper: ReturnType<typeof mountReadout>): string[] {
  return wrapper.get('[aria-label="Pixel under the cursor"]').findAll(':scope > span').map((s) => s.text().replace(/\s+/g, ' '))
}

describe('ImagePixelReadout', () => {
  it('When the cursor is off the image, then the readout invites pointing at it instead of showing numbers', () => {
    const wrapper = mountReadout({ pixel: null, value: null, pixelSizeNm: 200, floatValues: false })
    expect(parts(wrapper)).toEqual(['Point at the image to read a pixel'])
  })

  it('When the cursor is on a pixel of a calibrated 16-bit frame, then its position reads in px and in µm from the pixel size, with its integer value', () => {
    // KB24-A300_field-sweep.tif: 200 nm per pixel. Pixel (137, 64) lies 137·200/1000 = 27.4 µm right and 64·200/1000 = 12.8 µm down.
    const wrapper = mountReadout({ pixel: { x: 137, y: 64 }, value: 41_873, pixelSizeNm: 200, floatValues: false })
    expect(parts(wrapper)).toEqual(['x, y 137, 64 px', '27.4, 12.8 µm', 'value 41873'])
  })

  it('When the pixel size gives more than three decimals of a µm, then the position is rounded to the nanometre', () => {
    // 83.3 nm/px: x = 3 → 0.2499 µm, y = 7 → 0.5831 µm; to 3 decimals (1 nm): 0.25 and 0.583.
    const wrapper = mountReadout({ pixel: { x: 3, y: 7 }, value: 12, pixelSizeNm: 83.3, floatValues: false })
    expect(parts(wrapper)[1]).toBe('0.25, 0.583 µm')
  })

  it('When the position runs past a thousand µm, then it reads without digit grouping, so the two coordinates stay two numbers', () => {
    // 1 µm pixels: pixel (2048, 1024) lies 2048 µm right and 1024 µm down; "2,048, 1,024 µm" would read as four numbers.
    const wrapper = mountReadout({ pixel: { x: 2048, y: 1024 }, value: 7, pixelSizeNm: 1000, floatValues: false })
    expect(parts(wrapper)[1]).toBe('2048, 1024 µm')
  })

  it('When the image has no calibration, then only the px position shows and no µm are guessed', () => {
    const wrapper = mountReadout({ pixel: { x: 137, y: 64 }, value: 208, pixelSizeNm: null, floatValues: false })
    expect(parts(wrapper)).toEqual(['x, y 137, 64 px', 'value 208'])
    expect(wrapper.text()).not.toContain('µm')
  })

  it('When the frame holds floats, then the value shows five significant digits', () => {
    // 0.123456789 to 5 significant digits is 0.12346; 1234.56789 is 1234.6.
    expect(parts(mountReadout({ pixel: { x: 0, y: 0 }, value: 0.123456789, pixelSizeNm: 200, floatValues: true })).at(-1)).toBe('value 0.12346')
    expect(parts(mountReadout({ pixel: { x: 0, y: 0 }, value: 1234.56789, pixelSizeNm: 200, floatValues: true })).at(-1)).toBe('value 1234.6')
  })

  it('When a float frame (a difference image) holds a negative or tiny value, then it reads with a true minus sign and a power of ten', () => {
    // −0.0123456 to 5 significant digits is −0.012346 (U+2212); 1.23456×10⁻⁷ keeps 5 digits as 1.2346×10⁻⁷.
    expect(parts(mountReadout({ pixel: { x: 0, y: 0 }, value: -0.0123456, pixelSizeNm: 200, floatValues: true })).at(-1)).toBe('value −0.012346')
    expect(parts(mountReadout({ pixel: { x: 0, y: 0 }, value: 1.23456e-7, pixelSizeNm: 200, floatValues: true })).at(-1)).toBe('value 1.2346×10⁻⁷')
  })

  it('When the pixel value is not known yet, then the value reads "—" while the position still shows', () => {
    const wrapper = mountReadout({ pixel: { x: 0, y: 511 }, value: null, pixelSizeNm: 200, floatValues: false })
    // 511·200/1000 = 102.2 µm.
    expect(parts(wrapper)).toEqual(['x, y 0, 511 px', '0, 102.2 µm', 'value —'])
  })
})
