/**
 * Colour maps for showing one-channel frames, and the display lookup table that applies brightness, contrast and
 * gamma before the colour map.
 *
 * Viridis: the perceptually uniform map of matplotlib, designed by Stéfan van der Walt and Nathaniel J. Smith (with
 * Eric Firing), released under CC0 (public domain dedication) in the mpl-colormaps project and shipped as
 * matplotlib's `_viridis_data` (256 sRGB entries). The table below is not a copy of those 256 entries: it keeps 33 of
 * them as anchors (entries 0, 8, 16, …, 248 and 255, six decimals as published) and fills the entries between
 * neighbours by linear interpolation in sRGB. Over eight entries the published curve is close to straight, so the
 * interpolated 8-bit entries stay within about one step of the published ones (checked between anchors), and the
 * lightness L* rises along the map (tested: over every four entries, and per entry up to 8-bit rounding, as for the
 * published entries rounded).
 * Grey: identity ramp.
 */

export const COLORMAP_NAMES = ['grey', 'viridis'] as const
export type ColormapName = (typeof COLORMAP_NAMES)[number]

export const COLORMAP_LABELS: Record<ColormapName, string> = {
  grey: 'Grey',
  viridis: 'Viridis (perceptually uniform)',
}

/** The published viridis entries kept as anchors: [entry index, r, g, b] with channels in 0..1. */
const VIRIDIS_ANCHORS: readonly (readonly [number, number, number, number])[] = [
  [0, 0.267004, 0.004874, 0.329415],
  [8, 0.277018, 0.050344, 0.375715],
  [16, 0.282327, 0.094955, 0.417331],
  [24, 0.282884, 0.13592, 0.453427],
  [32, 0.278826, 0.17549, 0.483397],
  [40, 0.270595, 0.214069, 0.507052],
  [48, 0.258965, 0.251537, 0.524736],
  [56, 0.244972, 0.287675, 0.53726],
  [64, 0.229739, 0.322361, 0.545706],
  [72, 0.214298, 0.355619, 0.551184],
  [80, 0.19943, 0.387607, 0.554642],
  [88, 0.185556, 0.41857, 0.556753],
  [96, 0.172719, 0.448791, 0.557885],
  [104, 0.160665, 0.47854, 0.558115],
  [112, 0.149039, 0.508051, 0.55725],
  [120, 0.13777, 0.537492, 0.554906],
  [128, 0.127568, 0.566949, 0.550556],
  [136, 0.120565, 0.596422, 0.543611],
  [144, 0.120638, 0.625828, 0.533488],
  [152, 0.132268, 0.655014, 0.519661],
  [160, 0.157851, 0.683765, 0.501686],
  [168, 0.196571, 0.711827, 0.479221],
  [176, 0.24607, 0.73891, 0.452024],
  [184, 0.304148, 0.764704, 0.419943],
  [192, 0.369214, 0.788888, 0.382914],
  [200, 0.440137, 0.811138, 0.340967],
  [208, 0.515992, 0.831158, 0.294279],
  [216, 0.595839, 0.848717, 0.243329],
  [224, 0.678489, 0.863742, 0.189503],
  [232, 0.762373, 0.876424, 0.137064],
  [240, 0.845561, 0.887322, 0.099702],
  [248, 0.926106, 0.89733, 0.104071],
  [255, 0.993248, 0.906157, 0.143936],
]

/** 256 × RGB, channels 0..255, interpolated between the anchors. */
function interpolateAnchors(anchors: readonly (readonly [number, number, number, number])[]): Uint8ClampedArray {
  const table = new Uint8ClampedArray(256 * 3)
  for (let a = 0; a < anchors.length - 1; a++) {
    const [i0, r0, g0, b0] = anchors[a]
    const [i1, r1, g1, b1] = anchors[a + 1]
    for (let i = i0; i <= i1; i++) {
      const t = (i - i0) / (i1 - i0)
      table[i * 3] = Math.round((r0 + (r1 - r0) * t) * 255)
      table[i * 3 + 1] = Math.round((g0 + (g1 - g0) * t) * 255)
      table[i * 3 + 2] = Math.round((b0 + (b1 - b0) * t) * 255)
    }
  }
  return table
}

function greyRamp(): Uint8ClampedArray {
  const table = new Uint8ClampedArray(256 * 3)
  for (let i = 0; i < 256; i++) table.fill(i, i * 3, i * 3 + 3)
  return table
}

/** Each map as 256 RGB triples (768 values, 0..255), index 0 for the darkest input. */
export const COLORMAPS: Readonly<Record<ColormapName, Uint8ClampedArray>> = {
  grey: greyRamp(),
  viridis: interpolateAnchors(VIRIDIS_ANCHORS),
}

/** How a frame is shown; none of it changes the stored pixels or any measurement. */
export interface DisplaySettings {
  /** Added to the normalised value, −1..1 (0 = unchanged). */
  brightness: number
  /** Slope around mid-grey, > 0 (1 = unchanged). */
  contrast: number
  /** Display gamma, > 0 (1 = linear; above 1 lifts the mid-tones). */
  gamma: number
  colormap: ColormapName
}

export const DEFAULT_DISPLAY: Readonly<DisplaySettings> = { brightness: 0, contrast: 1, gamma: 1, colormap: 'grey' }

/**
 * The display lookup table: 256 RGBA entries for normalised input levels 0..255 (the frame's display range mapped to
 * 0..1). Per level t: t' = clamp((t − ½)·contrast + ½ + brightness, 0, 1), then t'' = t'^(1/gamma), then the colour map
 * at t'' [P: the usual window/level and gamma of image viewers].
 */
export function displayLut(settings: DisplaySettings): Uint8ClampedArray {
  const colors = COLORMAPS[settings.colormap]
  const contrast = settings.contrast > 0 ? settings.contrast : 1
  const inverseGamma = settings.gamma > 0 ? 1 / settings.gamma : 1
  const lut = new Uint8ClampedArray(256 * 4)
  for (let level = 0; level < 256; level++) {
    const windowed = Math.min(1, Math.max(0, (level / 255 - 0.5) * contrast + 0.5 + settings.brightness))
    const index = Math.round(windowed ** inverseGamma * 255)
    lut[level * 4] = colors[index * 3]
    lut[level * 4 + 1] = colors[index * 3 + 1]
    lut[level * 4 + 2] = colors[index * 3 + 2]
    lut[level * 4 + 3] = 255
  }
  return lut
}
