import { describe, expect, it } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import ElementPlus from 'element-plus'
import type { FrameMeasurements } from '@shared/analysis/analyzeFrame'
import type { StackFrameResultDto } from '@shared/types/stack'
import StackFrameTable from '@/components/StackFrameTable.vue'
import { imageDetailDto } from '../labDtos'

const IMAGE_ID = imageDetailDto().id
const MINUS = '\u2212'

/** One frame's measurements of KB24-A300_field-sweep.tif (200 nm/px); a test names only the numbers it shows. */
function measurements(overrides: Partial<FrameMeasurements> = {}): FrameMeasurements {
  return {
    width: 512,
    height: 512,
    pixelSizeNm: 200,
    threshold: 0.42,
    analysedPx: 512 * 512,
    upFraction: 0.5,
    downFraction: 0.5,
    magnetization: 0,
    domainCount: 12,
    upDomainCount: 6,
    downDomainCount: 6,
    meanUpDiameterPx: 9,
    meanWidthPx: 6,
    meanWidthStdErrPx: 0.2,
    meanWidthNm: 1200,
    upMeanWidthPx: 6,
    downMeanWidthPx: 6,
    periodPx: 12,
    periodNm: 2400,
    orientationDeg: null,
    orderParameter: 0.1,
    wallDensityPerPx: 0.1,
    wallDensityPerUm: 0.5,
    wallLengthPx: 26_000,
    reassignedFraction: 0.01,
    contrast: 310,
    ...overrides,
  }
}

function frame(index: number, overrides: Partial<StackFrameResultDto> = {}): StackFrameResultDto {
  return { index, field: null, fieldUnit: null, temperatureK: null, measurements: measurements(), error: null, ...overrides }
}

/** The table with its rows drawn (Element Plus lays out the body after mounting). */
async function mountTable(frames: StackFrameResultDto[]) {
  const wrapper = mount(StackFrameTable, { props: { imageId: IMAGE_ID, frames }, global: { plugins: [ElementPlus] }, attachTo: document.body })
  await flushPromises()
  return wrapper
}

/** Header texts and the cells of each row, as the table shows them. */
function table(wrapper: Awaited<ReturnType<typeof mountTable>>) {
  const root = wrapper.get('[aria-label="Per-frame measurements"]')
  return {
    headers: root.findAll('thead th').map((th) => th.text()),
    rows: root.findAll('tbody tr').map((row) => row.findAll('td').map((cell) => cell.text())),
  }
}

describe('StackFrameTable', () => {
  it('When a calibrated frame was measured, then each quantity shows with its unit, rounded to its significant digits, with a true minus sign', async () => {
    const wrapper = await mountTable([
      frame(3, {
        field: -20,
        fieldUnit: 'mT',
        // M/Ms = (A_up − A_down)/(A_up + A_down) = (0.006175 − 0.993825)/1 = −0.98765 → 3 significant digits: −0.988.
        measurements: measurements({ upFraction: 0.006175, downFraction: 0.993825, magnetization: 0.006175 - 0.993825, domainCount: 7, meanWidthPx: 6.1728, meanWidthNm: 6.1728 * 200, periodPx: 12.3455, periodNm: 12.3455 * 200, wallDensityPerUm: 0.81234 }),
      }),
    ])
    const { headers, rows } = table(wrapper)
    expect(headers).toEqual(['Frame', 'Field / temperature', 'M/Ms', 'Domains', 'Mean width', 'Period', 'Wall density', 'Problem'])
    // Widths in nm from 200 nm/px: 6.1728·200 = 1234.56 nm → 4 digits: 1235 nm; 12.3455·200 = 2469.1 nm → 2469 nm.
    // Wall density 0.81234 µm⁻¹ → 3 digits: 0.812 µm⁻¹.
    expect(rows).toEqual([['3', `${MINUS}20 mT`, `${MINUS}0.988`, '7', '1235 nm', '2469 nm', '0.812 µm⁻¹', '']])
  })

  it('When the image has no pixel size, then lengths and the wall density are given per pixel, never converted with a guessed size', async () => {
    const wrapper = await mountTable([
      frame(0, {
        temperatureK: 295.5,
        measurements: measurements({ pixelSizeNm: null, magnetization: 0.5, meanWidthPx: 6.1728, meanWidthNm: null, periodPx: 12.345, periodNm: null, wallDensityPerPx: 0.04321, wallDensityPerUm: null }),
      }),
    ])
    // 3 significant digits in px: 6.1728 → 6.17 px, 12.345 → 12.3 px, 0.04321 → 0.0432 px⁻¹.
    expect(table(wrapper).rows).toEqual([['0', '295.5 K', '0.5', '12', '6.17 px', '12.3 px', '0.0432 px⁻¹', '']])
  })

  it('When a frame has both a field and a temperature, then both show, each in its own unit', async () => {
    const wrapper = await mountTable([frame(5, { field: 12.5, fieldUnit: 'Oe', temperatureK: 300 })])
    expect(table(wrapper).rows[0][1]).toBe('12.5 Oe · 300 K')
  })

  it('When frames failed or are not measured yet, then their numbers read "—" and the Problem column says why', async () => {
    const reason = 'The frame could not be aligned with frame 0 (no overlap).'
    const wrapper = await mountTable([frame(0, { field: 0, fieldUnit: 'mT' }), frame(1, { field: 5, fieldUnit: 'mT', measurements: null, error: reason }), frame(2, { measurements: null })])
    const { rows } = table(wrapper)
    expect(rows[0].slice(2, 4)).toEqual(['0', '12'])
    expect(rows[0].at(-1)).toBe('')
    expect(rows[1]).toEqual(['1', '5 mT', '—', '—', '—', '—', '—', reason])
    expect(rows[2]).toEqual(['2', '—', '—', '—', '—', '—', '—', 'Not measured yet'])
  })

  it('When the table lists frames, then each row shows that frame’s thumbnail, named for its frame', async () => {
    const wrapper = await mountTable([frame(0), frame(1)])
    const thumbnails = wrapper.findAll('tbody img').map((img) => [img.attributes('src'), img.attributes('alt')])
    expect(thumbnails).toEqual([
      [`/api/images/${IMAGE_ID}/frames/0/thumbnail.png`, 'Frame 0'],
      [`/api/images/${IMAGE_ID}/frames/1/thumbnail.png`, 'Frame 1'],
    ])
  })

  it('When a row is clicked, then the table asks to open that frame, failed ones included', async () => {
    const wrapper = await mountTable([frame(0), frame(7, { measurements: null, error: 'Frame is blank.' }), frame(9)])
    const rows = wrapper.findAll('tbody tr')
    await rows[1].trigger('click')
    await rows[2].trigger('click')
    expect(wrapper.emitted('open')).toEqual([[7], [9]])
  })
})
