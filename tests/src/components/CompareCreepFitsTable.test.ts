import { describe, expect, it } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import ElementPlus from 'element-plus'
import type { ComparisonGroupDto, ComparisonResultDto, ComparisonValueDto } from '@shared/types/comparison'
import CompareCreepFitsTable from '@/components/CompareCreepFitsTable.vue'

/** A sample's creep slope as the server reports it (constructed numbers). */
function slope(sampleId: number, name: string, value: number, slopeStdErr: number | null): ComparisonValueDto {
  return {
    value,
    source: 'motion',
    draft: false,
    sample: { id: sampleId, name },
    image: null,
    frameId: null,
    frameIndex: null,
    analysisId: null,
    stackRunId: null,
    creepFit: { slopeStdErr, series: [{ id: 1, name: 'a.tif' }], steps: 3, usedSteps: 3, creepFieldRangeMT: [4, 6] },
  }
}

function group(key: number, values: ComparisonValueDto[]): ComparisonGroupDto {
  return {
    key,
    label: `${key} °C`,
    samples: values.map((v) => v.sample),
    n: values.length,
    mean: values[0].value,
    standardDeviation: null,
    ci: { lower: values[0].value, upper: values[0].value, level: 0.95, resamples: 2000, seed: 1 },
    fiveNumber: null,
    hasDrafts: false,
    values,
  }
}

const RESULT: ComparisonResultDto = {
  measure: 'creepSlope',
  label: 'Creep slope C',
  unit: 'mT^(1/4)',
  groupBy: 'annealTemperatureC',
  groupByLabel: 'Anneal temperature',
  includeDrafts: false,
  labId: 1,
  groups: [group(250, [slope(1, 'Film 250', 40.35, 0.033)]), group(350, [slope(2, 'Film 350', 30.03, null)])],
  pairs: [],
  excluded: { uncalibrated: 0, noSample: 0, notAtRemanence: 0, missing: 0, noMotionSeries: 0, noCreepFit: 0 },
  notes: [],
}

describe('CompareCreepFitsTable', () => {
  it('When creep slopes are compared, then each sample shows its group, C ± the fit’s standard error in mT^(1/4) and what was fitted', async () => {
    const wrapper = mount(CompareCreepFitsTable, { props: { result: RESULT }, global: { plugins: [ElementPlus] } })
    // Element Plus lays out the table's columns after mounting.
    await flushPromises()
    const rows = wrapper.findAll('tbody tr').map((tr) => tr.findAll('td').map((td) => td.text()))
    expect(rows).toEqual([
      ['250 °C', 'Film 250', '40.35 ± 0.03 mT^(1/4)', '1 series, 3 of 3 steps in the creep fit (4–6 mT)'],
      // Without a standard error (too few points for one) the slope stands alone.
      ['350 °C', 'Film 350', '30.03 mT^(1/4)', '1 series, 3 of 3 steps in the creep fit (4–6 mT)'],
    ])
  })
})
