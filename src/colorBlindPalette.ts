/**
 * Colours that stay distinguishable with the common colour-vision deficiencies, for anything that must be told apart
 * by colour (loop branches, flipped pixels): the eight-colour set of M. Okabe and K. Ito, "Color Universal Design
 * (CUD): how to make figures and presentations that are friendly to colorblind people" (2002/2008, J*Fly), as widely
 * restated [from memory]. Wherever colour separates two things, a marker shape or a label separates them too.
 */
export const OKABE_ITO = {
  black: '#000000',
  orange: '#E69F00',
  skyBlue: '#56B4E9',
  bluishGreen: '#009E73',
  yellow: '#F0E442',
  blue: '#0072B2',
  vermillion: '#D55E00',
  reddishPurple: '#CC79A7',
} as const

/** The same colours as 8-bit RGB triples, for pixel overlays. */
export function rgbOf(hex: string): [number, number, number] {
  const n = Number.parseInt(hex.slice(1), 16)
  return [(n >> 16) & 255, (n >> 8) & 255, n & 255]
}
