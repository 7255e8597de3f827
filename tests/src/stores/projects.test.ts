import { beforeEach, describe, expect, it } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createPinia, setActivePinia } from 'pinia'
import ElementPlus from 'element-plus'
import { createMemoryHistory } from 'vue-router'
import type { SampleDto, SampleSummaryDto } from '@shared/types/lab'
import { createAppRouter } from '@/router'
import { useProjectsStore } from '@/stores/projects'
import SampleTable from '@/components/SampleTable.vue'
import { jsonResponse, stubFetch } from '../fakeApi'

const base: SampleDto = {
  id: 1,
  projectId: 3,
  name: 'KB24-A200',
  material: 'Ta/CoFeB/MgO',
  thicknessNm: 1.1,
  substrate: 'Si',
  annealTemperatureC: 200,
  annealDurationMin: 60,
  annealAtmosphere: 'vacuum',
  annealFieldMT: 600,
  notes: '',
}
const LISTED: SampleSummaryDto[] = [
  { ...base, imageCount: 2 },
  { ...base, id: 2, name: 'KB24-A300', annealTemperatureC: 300, imageCount: 0 },
]

beforeEach(() => setActivePinia(createPinia()))

describe('projects store, samples with their image counts', () => {
  it('When a sample is added or edited, then the list keeps every image count (0 for the new one) and the table shows them', async () => {
    stubFetch({
      'GET /api/auth/me': () => jsonResponse(401, { error: { code: 'unauthenticated', message: 'Sign in' } }),
      'GET /api/projects/3/samples': () => jsonResponse(200, LISTED),
      'POST /api/projects/3/samples': () => jsonResponse(201, { ...base, id: 3, name: 'KB24-A250', annealTemperatureC: 250 }),
      // The PATCH answer is a plain sample (no count): the count of the row stays.
      'PATCH /api/samples/1': () => jsonResponse(200, { ...base, notes: 'edge chipped' }),
    })
    const store = useProjectsStore()
    await store.fetchSamples(3)
    await store.addSample(3, { ...base, name: 'KB24-A250', annealTemperatureC: 250 })
    await store.editSample(1, { notes: 'edge chipped' })
    const rows = store.samplesOf(3).items.map((s) => [s.name, s.imageCount, s.notes])
    expect(rows).toEqual([
      ['KB24-A200', 2, 'edge chipped'],
      ['KB24-A250', 0, ''],
      ['KB24-A300', 0, ''],
    ])

    const router = createAppRouter(createMemoryHistory())
    const table = mount(SampleTable, { props: { samples: store.samplesOf(3).items }, global: { plugins: [router, ElementPlus] }, attachTo: document.body })
    await flushPromises()
    expect(table.findAll('thead th').map((th) => th.text())).toContain('Images')
    // Nothing is editable here, so there is no Actions column: the counts are the last cells.
    const countCells = table.findAll('tbody tr').map((tr) => tr.findAll('td').at(-1)!.text())
    expect(countCells).toEqual(['2', '0', '0'])
    // A count above zero leads to the image list showing that sample's images.
    const links = table.findAll('tbody tr').map((tr) => tr.findAll('td').at(-1)!.find('a'))
    expect(links.map((a) => (a.exists() ? [a.attributes('href'), a.attributes('aria-label')] : null))).toEqual([
      ['/images?projectId=3&sampleId=1', '2 images of KB24-A200'],
      null,
      null,
    ])
  })
})
