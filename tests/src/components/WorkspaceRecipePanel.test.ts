import { describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import ElementPlus from 'element-plus'
import { DEFAULT_RECIPE, type AnalysisRecipe } from '@shared/analysis/recipe'
import WorkspaceRecipePanel from '@/components/WorkspaceRecipePanel.vue'
import { getButton, getByLabel } from '../domQueries'

/** Mounted, with each form label linked to its control (Element Plus links them once the controls have registered). */
async function mountPanel(recipe: AnalysisRecipe = { ...DEFAULT_RECIPE }, busy = false) {
  const wrapper = mount(WorkspaceRecipePanel, { props: { recipe, busy }, global: { plugins: [ElementPlus] }, attachTo: document.body })
  await flushPromises()
  return wrapper
}

function emittedRecipes(wrapper: Awaited<ReturnType<typeof mountPanel>>): AnalysisRecipe[] {
  return (wrapper.emitted('update:recipe') ?? []).map(([recipe]) => recipe as AnalysisRecipe)
}

describe('WorkspaceRecipePanel', () => {
  it('When the smoothing σ is typed, then a new recipe object with only that value changed is emitted', async () => {
    const recipe = { ...DEFAULT_RECIPE }
    const wrapper = await mountPanel(recipe)
    const input = getByLabel(wrapper, 'Smoothing σ (px)')
    await input.setValue('2.5')
    await input.trigger('change')

    const [emitted] = emittedRecipes(wrapper)
    expect(emitted).toEqual({ ...DEFAULT_RECIPE, smoothingSigma: 2.5 })
    expect(emitted).not.toBe(recipe)
    expect(recipe.smoothingSigma).toBe(DEFAULT_RECIPE.smoothingSigma)
  })

  it('When k-means with 3 classes is chosen, then the method and the class count change together', async () => {
    const wrapper = await mountPanel()
    const option = wrapper.findAll('label').find((l) => l.text() === 'k-means · 3')
    await option!.get('input').setValue(true)
    expect(emittedRecipes(wrapper)).toEqual([{ ...DEFAULT_RECIPE, method: 'kmeans', kmeansClasses: 3 }])
  })

  it('When "Fill enclosed holes" is switched on, then the emitted recipe has fillHoles true', async () => {
    const wrapper = await mountPanel()
    await getByLabel(wrapper, 'Fill enclosed holes').trigger('change')
    expect(emittedRecipes(wrapper)).toEqual([{ ...DEFAULT_RECIPE, fillHoles: true }])
  })

  it('When the background is a flat-field, then its σ is asked for; with a reference frame, the frame index instead', async () => {
    const wrapper = await mountPanel()
    expect(getByLabel(wrapper, 'Flat-field σ (px)').element.value).toBe('40')
    await wrapper.setProps({ recipe: { ...DEFAULT_RECIPE, background: 'reference', referenceFrame: 4 }, frameCount: 20 })
    await flushPromises()
    expect(wrapper.findAll('label').map((l) => l.text())).not.toContain('Flat-field σ (px)')
    expect(getByLabel(wrapper, 'Reference frame').element.value).toBe('4')
  })

  it('When Preview is clicked, then `preview` is emitted and the recipe is left alone', async () => {
    const wrapper = await mountPanel()
    await getButton(wrapper, 'Preview').trigger('click')
    expect(wrapper.emitted('preview')).toHaveLength(1)
    expect(wrapper.emitted('update:recipe')).toBeUndefined()
  })

  it('When a preview is running, then the Preview button shows it is busy and cannot be pressed again', async () => {
    const wrapper = await mountPanel(undefined, true)
    const button = getButton(wrapper, 'Preview')
    expect(button.classes()).toContain('is-loading')
    expect(button.attributes('disabled')).toBeDefined()
  })

  it('When "Reset to defaults" is clicked, then a fresh copy of the default recipe is emitted', async () => {
    const wrapper = await mountPanel({ ...DEFAULT_RECIPE, method: 'kmeans', kmeansClasses: 3, minDomainArea: 50 })
    await getButton(wrapper, 'Reset to defaults').trigger('click')
    const [emitted] = emittedRecipes(wrapper)
    expect(emitted).toEqual(DEFAULT_RECIPE)
    expect(emitted).not.toBe(DEFAULT_RECIPE)
  })

  it('When the panel shows, then every setting has a label in our words and a help icon beside it', async () => {
    const wrapper = await mountPanel()
    const settings = ['Segmentation', 'Background', 'Flat-field σ (px)', 'Noise filter', 'Smoothing σ (px)', 'Clean-up', 'Smallest domain (px)', 'Fill enclosed holes', 'Align stack frames']
    expect(wrapper.findAll('label').map((l) => l.text())).toEqual(expect.arrayContaining(settings))
    expect(wrapper.findAll('.workspace-recipe-panel-help').map((help) => help.attributes('aria-label'))).toEqual(settings.map((name) => `About ${name}`))
  })

  it('When a screen reader reads the settings, then each control is named by its setting alone and the step buttons say what they change', async () => {
    const wrapper = await mountPanel()
    // The label around each control also holds the help icon; its name must not run into the control's.
    expect(wrapper.find('[role="radiogroup"][aria-label="Segmentation"]').exists()).toBe(true)
    expect(wrapper.find('[role="switch"][aria-label="Align stack frames"]').exists()).toBe(true)
    const smoothing = wrapper.get('input[aria-label="Smoothing σ (px)"]')
    expect(smoothing.attributes('role')).toBe('spinbutton')
    const stepper = smoothing.element.closest('.el-input-number')!
    expect(stepper.querySelector('.el-input-number__decrease')!.getAttribute('aria-label')).toBe('Decrease Smoothing σ (px)')
    expect(stepper.querySelector('.el-input-number__increase')!.getAttribute('aria-label')).toBe('Increase Smoothing σ (px)')

    // A control that appears later (the reference frame, with a reference background) is named too.
    await wrapper.setProps({ recipe: { ...DEFAULT_RECIPE, background: 'reference', referenceFrame: 0 }, frameCount: 5 })
    await flushPromises()
    const reference = wrapper.get('input[aria-label="Reference frame"]').element.closest('.el-input-number')!
    expect(reference.querySelector('.el-input-number__increase')!.getAttribute('aria-label')).toBe('Increase Reference frame')
  })

  it('When a keyboard user tabs onto a help icon, then its explanation shows, as it does on hover', async () => {
    const wrapper = await mountPanel()
    const help = wrapper.get('[aria-label="About Smoothing σ (px)"]')
    expect(help.attributes('tabindex')).toBe('0')
    await help.trigger('focus')
    await vi.waitFor(() => {
      const tip = [...document.querySelectorAll('[role="tooltip"]')].find((t) => t.textContent?.includes('Gaussian blur before the split'))
      expect(tip).toBeDefined()
      expect(getComputedStyle(tip!).display).not.toBe('none')
    })
  })
})
