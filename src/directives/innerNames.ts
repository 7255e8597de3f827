import type { Directive } from 'vue'

/** CSS selector inside a component → the accessible name (aria-label) its element should carry. */
export type InnerNames = Record<string, string>

/**
 * Names controls that a library component renders inside itself without a prop for their names: Element Plus gives
 * every number input's step buttons the same generic names and leaves the page-size select of a pagination unnamed,
 * so a screen reader cannot tell which value a button changes or what a select chooses. Applied to the component's
 * root element; renamed again after each update, since the library may re-render them.
 * Usage: `<el-pagination v-inner-names="{ '.el-pagination__sizes input': 'Images per page' }" … />`
 */
export const vInnerNames: Directive<HTMLElement, InnerNames> = {
  mounted: applyInnerNames,
  updated: applyInnerNames,
}

function applyInnerNames(root: HTMLElement, { value }: { value: InnerNames }): void {
  for (const [selector, name] of Object.entries(value)) root.querySelector(selector)?.setAttribute('aria-label', name)
}

/** Names of a number input's step buttons after its setting: "Decrease Smoothing σ (px)", "Increase …". */
export function stepButtonNames(setting: string): InnerNames {
  return { '.el-input-number__decrease': `Decrease ${setting}`, '.el-input-number__increase': `Increase ${setting}` }
}
