import { expect, vi } from 'vitest'
import { flushPromises, type DOMWrapper, type VueWrapper } from '@vue/test-utils'

type Found<T extends Element> = Omit<DOMWrapper<T>, 'exists'>

/** The form control a visible `<label>` names (via its `for` attribute), as a person would find it. */
export function getByLabel(wrapper: VueWrapper, text: string): Found<HTMLInputElement> {
  const label = wrapper.findAll('label').find((l) => l.text().trim() === text)
  if (!label) throw new Error(`No label "${text}"`)
  const id = label.attributes('for')
  if (!id) throw new Error(`Label "${text}" is not linked to a control`)
  return wrapper.get<HTMLInputElement>(`[id="${id}"]`)
}

/** A button by its visible text. */
export function getButton(wrapper: VueWrapper, text: string): DOMWrapper<HTMLButtonElement> {
  const button = wrapper.findAll<HTMLButtonElement>('button').find((b) => b.text().trim() === text)
  if (!button) throw new Error(`No button "${text}"`)
  return button
}

/** Texts of the elements with role="alert". */
export function alertTexts(wrapper: VueWrapper): string[] {
  return wrapper.findAll('[role="alert"]').map((a) => a.text())
}

/** An Element Plus select, found by the accessible name of its input. */
export function selectNamed(wrapper: VueWrapper, name: string): DOMWrapper<Element> {
  const select = wrapper.findAll('.el-select').find((s) => s.find(`input[aria-label="${name}"]`).exists())
  if (!select) throw new Error(`No select "${name}"`)
  return select
}

/** The texts a select shows as chosen (one, or the tags of a multiple select); none while it shows its placeholder. */
export function chosenTexts(wrapper: VueWrapper, name: string): string[] {
  return selectNamed(wrapper, name).findAll('.el-select__placeholder:not(.is-transparent)').map((chosen) => chosen.text())
}

/** Open a select as a person would; its options are teleported to the end of the body (the list its input controls). */
export async function openSelectOptions(wrapper: VueWrapper, name: string): Promise<HTMLElement[]> {
  const select = selectNamed(wrapper, name)
  await select.get('.el-select__wrapper').trigger('click')
  await flushPromises()
  const list = select.get(`input[aria-label="${name}"]`).attributes('aria-controls')
  return [...document.body.querySelectorAll<HTMLElement>(`[id="${list}"] .el-select-dropdown__item`)]
}

/** Choose the option whose text is `text` (or, failing that, begins with it: options may add a detail). */
export async function chooseOption(wrapper: VueWrapper, name: string, text: string): Promise<void> {
  const options = await openSelectOptions(wrapper, name)
  const option = options.find((o) => o.textContent?.trim() === text) ?? options.find((o) => o.textContent?.trim().startsWith(text))
  if (!option) throw new Error(`No option "${text}" in "${name}"`)
  option.click()
  await flushPromises()
}

/** The newest Element Plus message box, once it shows (they are put at the end of the body, outside the component). */
export async function messageBox(): Promise<HTMLElement> {
  await vi.waitFor(() => expect(document.querySelector('.el-message-box')).not.toBeNull())
  return [...document.querySelectorAll<HTMLElement>('.el-message-box')].at(-1)!
}

/** Press the button `text` of the newest message box, as a person answers a confirmation. */
export async function pressInMessageBox(text: string): Promise<void> {
  const button = [...(await messageBox()).querySelectorAll<HTMLButtonElement>('button')].find((b) => b.textContent?.trim() === text)
  if (!button) throw new Error(`No "${text}" in the message box`)
  button.click()
  await flushPromises()
}
