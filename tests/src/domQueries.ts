import type { DOMWrapper, VueWrapper } from '@vue/test-utils'

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
