/**
 * Encodes an 8-bit greyscale frame as a PNG (colour type 0, 8 bits) with jimp 1.6.1 (its PNG codec is pngjs).
 * Used for previews and thumbnails; the source data is never replaced by these.
 */

/**
 * Encode `image` (one byte per pixel, row-major) as a greyscale PNG.
 * @throws RangeError when data.length ≠ width × height.
 * @example const png = await encodeGrayPng({ width: 2, height: 1, data: new Uint8Array([0, 255]) })
 */
export async function encodeGrayPng(image: { width: number; height: number; data: Uint8Array }): Promise<Uint8Array> {
  const { width, height, data } = image
  if (!(width >= 1 && height >= 1) || data.length !== width * height) {
    throw new RangeError(`encodeGrayPng got ${data.length} values for ${width} × ${height} pixels.`)
  }
  const { Jimp } = await import('jimp')
  const rgba = new Uint8Array(width * height * 4)
  for (let i = 0, j = 0; i < data.length; i++, j += 4) {
    rgba[j] = data[i]
    rgba[j + 1] = data[i]
    rgba[j + 2] = data[i]
    rgba[j + 3] = 255
  }
  const png = await Jimp.fromBitmap({ width, height, data: rgba }).getBuffer('image/png', { colorType: 0, inputHasAlpha: true })
  return new Uint8Array(png.buffer, png.byteOffset, png.byteLength)
}
