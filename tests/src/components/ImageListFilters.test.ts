import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus, { ElDatePicker } from 'element-plus'
import type { ProjectDto } from '@shared/types/lab'
import ImageListFilters from '@/components/ImageListFilters.vue'
import { useImagesStore } from '@/stores/images'
import { useProjectsStore } from '@/stores/projects'
import { jsonResponse, stubFetch, type RecordedRequest } from '../fakeApi'
import { chooseOption, chosenTexts, getButton, openSelectOptions, selectNamed } from '../domQueries'
import { sampleSummaryDto } from '../labDtos'

let pinia: Pinia

function project(id: number, name: string): ProjectDto {
  return { id, labId: 1, name, description: '', createdAt: '2026-01-05T09:00:00.000Z', sampleCount: 2, imageCount: 6 }
}

const PROJECTS = [project(1, 'KB-24 anneal series'), project(2, 'KB-25 thickness wedge')]
const SAMPLES: Record<number, ReturnType<typeof sampleSummaryDto>[]> = {
  1: [sampleSummaryDto(), sampleSummaryDto({ id: 4, name: 'KB24-A350', annealTemperatureC: 350 })],
  2: [sampleSummaryDto({ id: 9, projectId: 2, name: 'KB25-W110', annealTemperatureC: null })],
}

/** The filter bar over the lab's projects (loaded as the Images page does before), and the requests it leads to. */
async function mountFilters() {
  const requests = stubFetch({
    'GET /api/projects': () => jsonResponse(200, PROJECTS),
    'GET /api/projects/1/samples': () => jsonResponse(200, SAMPLES[1]),
    'GET /api/projects/2/samples': () => jsonResponse(200, SAMPLES[2]),
    'GET /api/images': () => jsonResponse(200, { items: [], total: 0, page: 1, pageSize: 25 }),
  })
  await useProjectsStore().fetchProjects()
  const wrapper = mount(ImageListFilters, { global: { plugins: [pinia, ElementPlus] }, attachTo: document.body })
  await flushPromises()
  requests.length = 0
  return { wrapper, requests }
}

type Wrapper = Awaited<ReturnType<typeof mountFilters>>['wrapper']

/** The query of each image-list request, as the server reads it. */
const listQueries = (requests: RecordedRequest[]) =>
  requests.filter((r) => r.method === 'GET' && r.url.startsWith('/api/images?')).map((r) => Object.fromEntries(new URL(r.url, 'http://localhost').searchParams))

/** The paging and order every list request carries besides its filters (the store's defaults). */
const PAGING = { page: '1', pageSize: '25', sort: 'createdAt', order: 'desc' }

/** The text a select shows as chosen, or null while it shows its placeholder. */
const chosen = (wrapper: Wrapper, name: string): string | null => chosenTexts(wrapper, name)[0] ?? null
const choose = chooseOption

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

afterEach(() => {
  vi.useRealTimers()
})

describe('ImageListFilters', () => {
  it('When nothing is filtered, then the sample choice waits for a project and no Clear filters is offered', async () => {
    const { wrapper, requests } = await mountFilters()
    expect(wrapper.get('[role="search"]').attributes('aria-label')).toBe('Filter images')
    const sample = selectNamed(wrapper, 'Sample')
    expect(sample.get('input').attributes('disabled')).toBeDefined()
    expect(sample.attributes('title')).toBe('Choose a project first')
    expect(['Project', 'Sample', 'Technique', 'Annotation status'].map((name) => chosen(wrapper, name))).toEqual([null, null, null, null])
    expect(wrapper.findAll('button').map((b) => b.text())).not.toContain('Clear filters')
    expect(requests).toEqual([])
  })

  it('When a project is chosen, then the list is asked for that project from page 1 and its samples become the choice', async () => {
    const { wrapper, requests } = await mountFilters()
    expect((await openSelectOptions(wrapper, 'Project')).map((o) => o.textContent?.trim())).toEqual(['KB-24 anneal series', 'KB-25 thickness wedge'])
    await choose(wrapper, 'Project', 'KB-24 anneal series')

    expect(chosen(wrapper, 'Project')).toBe('KB-24 anneal series')
    expect(listQueries(requests)).toEqual([{ projectId: '1', ...PAGING }])
    expect(requests.filter((r) => r.url === '/api/projects/1/samples')).toHaveLength(1)
    const sample = selectNamed(wrapper, 'Sample')
    expect(sample.get('input').attributes('disabled')).toBeUndefined()
    expect(sample.attributes('title')).toBeUndefined()
    expect((await openSelectOptions(wrapper, 'Sample')).map((o) => o.textContent?.trim())).toEqual(['KB24-A300', 'KB24-A350'])
  })

  it('When a sample is chosen, then the list is asked for the project and that sample', async () => {
    const { wrapper, requests } = await mountFilters()
    await choose(wrapper, 'Project', 'KB-24 anneal series')
    await choose(wrapper, 'Sample', 'KB24-A300')

    expect(chosen(wrapper, 'Sample')).toBe('KB24-A300')
    expect(useImagesStore().query).toMatchObject({ projectId: 1, sampleId: 3 })
    expect(listQueries(requests).at(-1)).toEqual({ projectId: '1', sampleId: '3', ...PAGING })
  })

  it('When the project changes after a sample was chosen, then the sample of the other project is dropped and the new project’s samples are offered', async () => {
    const { wrapper, requests } = await mountFilters()
    await choose(wrapper, 'Project', 'KB-24 anneal series')
    await choose(wrapper, 'Sample', 'KB24-A300')
    await choose(wrapper, 'Project', 'KB-25 thickness wedge')

    expect(useImagesStore().query).toMatchObject({ projectId: 2, sampleId: null })
    expect(listQueries(requests).at(-1)).toEqual({ projectId: '2', ...PAGING })
    expect(chosen(wrapper, 'Sample')).toBeNull()
    expect((await openSelectOptions(wrapper, 'Sample')).map((o) => o.textContent?.trim())).toEqual(['KB25-W110'])
  })

  it('When a project chosen before is chosen again, then its samples are not asked for a second time', async () => {
    const { wrapper, requests } = await mountFilters()
    await choose(wrapper, 'Project', 'KB-24 anneal series')
    await choose(wrapper, 'Project', 'KB-25 thickness wedge')
    await choose(wrapper, 'Project', 'KB-24 anneal series')
    expect(requests.filter((r) => r.url === '/api/projects/1/samples')).toHaveLength(1)
    expect((await openSelectOptions(wrapper, 'Sample')).map((o) => o.textContent?.trim())).toEqual(['KB24-A300', 'KB24-A350'])
  })

  it('When a technique and an annotation status are chosen, then each narrows the list, and both are sent together', async () => {
    const { wrapper, requests } = await mountFilters()
    expect((await openSelectOptions(wrapper, 'Technique')).map((o) => o.textContent?.trim())).toEqual(['Kerr, polar', 'Kerr, longitudinal', 'Magnetic force microscopy', 'Other'])
    await choose(wrapper, 'Technique', 'Magnetic force microscopy')
    expect((await openSelectOptions(wrapper, 'Annotation status')).map((o) => o.textContent?.trim())).toEqual(['Not started', 'In progress', 'Submitted'])
    await choose(wrapper, 'Annotation status', 'In progress')

    expect(chosen(wrapper, 'Technique')).toBe('Magnetic force microscopy')
    expect(chosen(wrapper, 'Annotation status')).toBe('In progress')
    expect(listQueries(requests)).toEqual([
      { technique: 'mfm', ...PAGING },
      { technique: 'mfm', status: 'in-progress', ...PAGING },
    ])
  })

  it('When a filter changes on a later page, then the list starts again at page 1', async () => {
    const { wrapper, requests } = await mountFilters()
    const images = useImagesStore()
    images.query = { ...images.query, page: 3 }
    await choose(wrapper, 'Technique', 'Kerr, polar')
    expect(listQueries(requests)).toEqual([{ technique: 'kerr-polar', ...PAGING }])
  })

  it('When a name is typed, then one request is sent after a 300 ms pause, with the final text', async () => {
    vi.useFakeTimers({ toFake: ['setTimeout', 'clearTimeout'] })
    const { wrapper, requests } = await mountFilters()
    const search = wrapper.get<HTMLInputElement>('input[aria-label="Search by name"]')
    await search.setValue('KB24')
    vi.advanceTimersByTime(200)
    await search.setValue('KB24-A300_field')
    vi.advanceTimersByTime(299)
    await flushPromises()
    expect(listQueries(requests)).toEqual([])

    vi.advanceTimersByTime(1)
    await flushPromises()
    expect(listQueries(requests)).toEqual([{ search: 'KB24-A300_field', ...PAGING }])
  })

  it('When upload dates are picked, then the list is asked from the first day’s local midnight to the end of the last day', async () => {
    const { wrapper, requests } = await mountFilters()
    // The date picker hands over the chosen days at local midnight (2 to 5 March 2026).
    wrapper.getComponent(ElDatePicker).vm.$emit('update:modelValue', [new Date(2026, 2, 2), new Date(2026, 2, 5)])
    await flushPromises()

    // Whole days in the person's time zone: 2 March 00:00:00.000 up to 5 March 23:59:59.999, sent as UTC instants.
    const from = new Date(2026, 2, 2, 0, 0, 0, 0).toISOString()
    const to = new Date(2026, 2, 5, 23, 59, 59, 999).toISOString()
    expect(listQueries(requests)).toEqual([{ from, to, ...PAGING }])
    expect(new Date(to).getTime() - new Date(from).getTime()).toBe(4 * 24 * 3600 * 1000 - 1)
  })

  it('When the date range is cleared, then neither bound is sent', async () => {
    const { wrapper, requests } = await mountFilters()
    const picker = wrapper.getComponent(ElDatePicker)
    picker.vm.$emit('update:modelValue', [new Date(2026, 2, 2), new Date(2026, 2, 5)])
    await flushPromises()
    picker.vm.$emit('update:modelValue', null)
    await flushPromises()
    expect(listQueries(requests).at(-1)).toEqual(PAGING)
    expect(useImagesStore().query).toMatchObject({ from: null, to: null })
  })

  it('When Clear filters is pressed, then the list is asked for at once without any filter, the search box empties, and page size and order stay', async () => {
    vi.useFakeTimers({ toFake: ['setTimeout', 'clearTimeout'] })
    const { wrapper, requests } = await mountFilters()
    const images = useImagesStore()
    images.query = { ...images.query, pageSize: 50, sort: 'name', order: 'asc' }
    const search = wrapper.get<HTMLInputElement>('input[aria-label="Search by name"]')
    await search.setValue('field-sweep')
    vi.advanceTimersByTime(300)
    await flushPromises()
    await choose(wrapper, 'Project', 'KB-24 anneal series')
    await choose(wrapper, 'Sample', 'KB24-A300')
    await choose(wrapper, 'Technique', 'Kerr, polar')
    await choose(wrapper, 'Annotation status', 'Submitted')
    expect(listQueries(requests).at(-1)).toEqual({ projectId: '1', sampleId: '3', technique: 'kerr-polar', status: 'submitted', search: 'field-sweep', page: '1', pageSize: '50', sort: 'name', order: 'asc' })
    requests.length = 0

    await getButton(wrapper, 'Clear filters').trigger('click')
    await flushPromises()

    expect(listQueries(requests)).toEqual([{ page: '1', pageSize: '50', sort: 'name', order: 'asc' }])
    // The emptied search box asks nothing more: the list already shows every name.
    vi.advanceTimersByTime(300)
    await flushPromises()
    expect(listQueries(requests)).toHaveLength(1)
    expect(['Project', 'Sample', 'Technique', 'Annotation status'].map((name) => chosen(wrapper, name))).toEqual([null, null, null, null])
    expect(search.element.value).toBe('')
    expect(selectNamed(wrapper, 'Sample').get('input').attributes('disabled')).toBeDefined()
    expect(wrapper.findAll('button').map((b) => b.text())).not.toContain('Clear filters')
  })
})
