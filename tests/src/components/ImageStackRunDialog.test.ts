import { beforeEach, describe, expect, it, vi } from 'vitest'
import { DOMWrapper, flushPromises, mount } from '@vue/test-utils'
import { createMemoryHistory, type Router } from 'vue-router'
import { createPinia, setActivePinia, type Pinia } from 'pinia'
import ElementPlus from 'element-plus'
import { DEFAULT_RECIPE, type AnalysisRecipe } from '@shared/analysis/recipe'
import { ENGINE_VERSION } from '@shared/analysis/engineVersion'
import type { StackRunDto } from '@shared/types/stack'
import { createAppRouter } from '@/router'
import ImageStackRunDialog from '@/components/ImageStackRunDialog.vue'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'
import { imageDetailDto } from '../labDtos'

const IMAGE_ID = 12
const NEW_RUN_ID = 57

const IMAGE = imageDetailDto({ id: IMAGE_ID })

/** The queued run as POST /api/images/:id/stack-runs answers it (202, server/services/stackRunService.ts). */
function queued(recipe: AnalysisRecipe): StackRunDto {
  return {
    id: NEW_RUN_ID,
    imageId: IMAGE_ID,
    recipe,
    engineVersion: ENGINE_VERSION,
    status: 'queued',
    framesTotal: 41,
    framesDone: 0,
    threshold: null,
    error: null,
    createdAt: '2026-11-12T15:00:00.000Z',
    startedAt: null,
    finishedAt: null,
  }
}

let pinia: Pinia
let router: Router

/** Mounted closed and then opened, as the image page does; the parent follows `update:modelValue`. */
async function openDialog(start: (body: { recipe: AnalysisRecipe }) => Response) {
  const requests = stubFetch({
    'GET /api/auth/me': () => jsonResponse(200, { id: 4, email: 'tobias.lindgren@thin-film.example', name: 'Tobias Lindgren', memberships: [{ labId: 1, labName: 'Thin-Film Magnetism Group', role: 'microscopist' }], csrfToken: 't' }),
    [`POST /api/images/${IMAGE_ID}/stack-runs`]: (request) => start(request.body as { recipe: AnalysisRecipe }),
  })
  router = createAppRouter(createMemoryHistory())
  await router.push(`/images/${IMAGE_ID}`)
  const wrapper = mount(ImageStackRunDialog, {
    props: { image: IMAGE, modelValue: false, 'onUpdate:modelValue': (open: boolean) => wrapper.setProps({ modelValue: open }) },
    global: { plugins: [pinia, router, ElementPlus] },
    attachTo: document.body,
  })
  await wrapper.setProps({ modelValue: true })
  await flushPromises()
  const starts = () => requests.filter((r) => r.method === 'POST')
  return { wrapper, starts }
}

/** The dialog as the person sees it: Element Plus moves it to the end of the body (`append-to-body`). */
function dialog(): DOMWrapper<HTMLElement> {
  const element = document.querySelector<HTMLElement>('[role="dialog"][aria-label="Process the whole stack"]')
  if (!element) throw new Error('The dialog is not open')
  return new DOMWrapper(element)
}

/** A button of the dialog by its visible text. */
function button(text: string): DOMWrapper<HTMLButtonElement> {
  const found = dialog().findAll<HTMLButtonElement>('button').find((b) => b.text().trim() === text)
  if (!found) throw new Error(`No button "${text}"`)
  return found
}

/** A radio (or radio button) by its visible text. */
async function choose(text: string): Promise<void> {
  const label = dialog().findAll('label').find((l) => l.text().trim() === text)
  if (!label) throw new Error(`No option "${text}"`)
  await label.get('input').setValue(true)
}

const threshold = () => dialog().get('[role="radiogroup"][aria-label="Threshold"]')
const checkedThreshold = () => threshold().get('.el-radio.is-checked').text()
const messages = () => [...document.querySelectorAll('.el-message')].map((m) => m.textContent?.trim())

beforeEach(() => {
  pinia = createPinia()
  setActivePinia(pinia)
})

describe('ImageStackRunDialog', () => {
  it('When the dialog opens, then it names the frames to process and proposes one threshold for the whole stack', async () => {
    await openDialog(() => jsonResponse(202, queued(DEFAULT_RECIPE)))
    expect(dialog().text()).toContain('Every one of the 41 frames is segmented with this recipe')
    expect(checkedThreshold()).toBe('One for the whole stack')
    expect(dialog().find('[role="radiogroup"][aria-label="Segmentation"]').exists()).toBe(true)
  })

  it('When a threshold per frame and recipe changes are chosen and processing starts, then they are sent and the new run opens', async () => {
    const { wrapper, starts } = await openDialog((body) => jsonResponse(202, queued(body.recipe)))
    await choose('One per frame')
    await choose('Median 3×3')
    const smoothing = dialog().get('input[aria-label="Smoothing σ (px)"]')
    await smoothing.setValue('2.5')
    await smoothing.trigger('change')

    await button('Start processing').trigger('click')
    await flushPromises()

    expect(starts()).toHaveLength(1)
    expect(starts()[0].body).toEqual({ recipe: { ...DEFAULT_RECIPE, stackThreshold: 'per-frame', denoise: 'median3', smoothingSigma: 2.5 } })
    expect(wrapper.emitted('update:modelValue')).toEqual([[false]])
    // The run's page is a lazily loaded route.
    await vi.waitFor(() => expect(router.currentRoute.value.fullPath).toBe(`/stack-runs/${NEW_RUN_ID}`), { timeout: 10_000 })
  })

  it('When k-means is chosen, then the threshold choice is switched off, since k-means sets no threshold', async () => {
    await openDialog(() => jsonResponse(202, queued(DEFAULT_RECIPE)))
    expect(threshold().findAll('input').every((input) => !(input.element as HTMLInputElement).disabled)).toBe(true)
    await choose('k-means · 2')
    expect(threshold().findAll('input').every((input) => (input.element as HTMLInputElement).disabled)).toBe(true)
  })

  it('When the job queue cannot take the run (503), then the reason is shown, the dialog stays open with the choices, and a second try sends them again', async () => {
    let calls = 0
    const { wrapper, starts } = await openDialog((body) =>
      ++calls === 1 ? errorResponse(503, 'jobs-unavailable', 'The job queue is not reachable; the run was not started (connection refused).') : jsonResponse(202, queued(body.recipe)),
    )
    await choose('One per frame')
    await button('Start processing').trigger('click')
    await flushPromises()

    await vi.waitFor(() => expect(messages()).toContain('The job queue is not reachable; the run was not started (connection refused).'))
    expect(wrapper.emitted('update:modelValue')).toBeUndefined()
    expect(router.currentRoute.value.fullPath).toBe(`/images/${IMAGE_ID}`)
    expect(checkedThreshold()).toBe('One per frame')
    expect(button('Start processing').classes()).not.toContain('is-loading')

    await button('Start processing').trigger('click')
    await flushPromises()
    expect(starts().map((r) => r.body)).toEqual([
      { recipe: { ...DEFAULT_RECIPE, stackThreshold: 'per-frame' } },
      { recipe: { ...DEFAULT_RECIPE, stackThreshold: 'per-frame' } },
    ])
    await vi.waitFor(() => expect(router.currentRoute.value.fullPath).toBe(`/stack-runs/${NEW_RUN_ID}`), { timeout: 10_000 })
  })

  it('When the server refuses the recipe (400), then its message is shown and the dialog stays open on the chosen recipe', async () => {
    const { wrapper, starts } = await openDialog(() => errorResponse(400, 'invalid-recipe', 'recipe.referenceFrame 41 is not a frame of this image (it has 41).'))
    await choose('Median 5×5')
    await button('Start processing').trigger('click')
    await flushPromises()

    expect(starts()).toHaveLength(1)
    await vi.waitFor(() => expect(messages()).toContain('recipe.referenceFrame 41 is not a frame of this image (it has 41).'))
    expect(wrapper.emitted('update:modelValue')).toBeUndefined()
    expect(dialog().get('[role="radiogroup"][aria-label="Noise filter"] .is-active').text()).toBe('Median 5×5')
  })

  it('When the dialog is cancelled and opened again, then nothing was sent and the recipe is back at the defaults', async () => {
    const { wrapper, starts } = await openDialog(() => jsonResponse(202, queued(DEFAULT_RECIPE)))
    await choose('One per frame')
    await button('Cancel').trigger('click')
    await flushPromises()
    expect(wrapper.emitted('update:modelValue')).toEqual([[false]])

    await wrapper.setProps({ modelValue: true })
    await flushPromises()
    expect(checkedThreshold()).toBe('One for the whole stack')
    expect(starts()).toHaveLength(0)
  })

  it('When "Reset to defaults" is pressed, then the choices go back to the default recipe', async () => {
    const { starts } = await openDialog((body) => jsonResponse(202, queued(body.recipe)))
    await choose('One per frame')
    await choose('Open')
    await button('Reset to defaults').trigger('click')
    expect(checkedThreshold()).toBe('One for the whole stack')

    await button('Start processing').trigger('click')
    await flushPromises()
    expect(starts()[0].body).toEqual({ recipe: DEFAULT_RECIPE })
  })
})
