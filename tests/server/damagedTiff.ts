/** A TIFF stack with one damaged page, for the tests of what happens when one frame of an upload cannot be decoded. */

/** Set the Compression tag (259) of page `page` of a little-endian TIFF to Deflate, so its raw strips fail to inflate. */
export function breakPage(tiff: Uint8Array, page: number): Uint8Array {
  const bytes = tiff.slice()
  const view = new DataView(bytes.buffer)
  let ifd = view.getUint32(4, true)
  for (let p = 0; p < page; p++) ifd = view.getUint32(ifd + 2 + 12 * view.getUint16(ifd, true), true)
  const entries = view.getUint16(ifd, true)
  for (let e = 0; e < entries; e++) {
    const entry = ifd + 2 + 12 * e
    if (view.getUint16(entry, true) === 259) {
      view.setUint16(entry + 8, 8, true)
      return bytes
    }
  }
  throw new Error('no Compression tag found')
}
