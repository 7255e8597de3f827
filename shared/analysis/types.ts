/**
 * Pixel containers shared by every analysis module.
 *
 * Conventions (METHODS §0): row-major, pixel (row y, column x) at index `y * width + x`, pixel centres at integer
 * coordinates. Lengths are in pixels inside the engine; physical units are applied by the caller from the pixel size.
 */

/** One greyscale frame. `data` keeps the decoder's precision (8-bit, 16-bit or float). */
export interface GrayImage {
  width: number
  height: number
  data: Uint8Array | Uint16Array | Float32Array
}

/** A float working copy of a frame (after smoothing, background subtraction, …). */
export interface FloatImage {
  width: number
  height: number
  data: Float32Array
}

/**
 * A binary domain map: 1 = "up" = the brighter phase (+M along the sensitivity axis), 0 = "down".
 * An optional `ignore` map (1 = excluded pixel: scratch, unresolved) removes pixels from every area and density.
 */
export interface BinaryMask {
  width: number
  height: number
  data: Uint8Array
  ignore?: Uint8Array
}

/** Pixel connectivity for labelling: 4 = edge neighbours, 8 = edge + corner neighbours. */
export type Connectivity = 4 | 8

/** A value with its standard error (null where no error is defined for that estimator). */
export interface Estimate {
  value: number
  stdErr: number | null
}
