/**
 * Probing and decoding through a ByteSource (how the server reads an upload from disk): the same header and pixels as
 * from bytes in memory, while reading only the directories to probe and about one page to decode a frame. The counts
 * of bytes read are constructed from encodeTiff's layout (each page: its strips, then its directory and tag values).
 */
import { describe, expect, it } from 'vitest'
import type { GrayImage } from '../../../shared/analysis/types'
import { bytesSource, type ByteSource } from '../../../shared/imageio/byteSource'
import { ImageDecodeError, decodeFrame, probeImage } from '../../../shared/imageio/decodeImage'
import { encodeTiff } from '../../../shared/imageio/encodeTiff'

const WIDTH = 256
const HEIGHT = 128
const PAGES = 8
const PAGE_BYTES = WIDTH * HEIGHT * 2

function frame(page: number): GrayImage {
  const data = new Uint16Array(WIDTH * HEIGHT)
  for (let i = 0; i < data.length; i++) data[i] = (i * 31 + page * 977) % 65536
  return { width: WIDTH, height: HEIGHT, data }
}

/** A ByteSource over `bytes` that counts what it was asked for. */
function countingSource(bytes: Uint8Array): ByteSource & { bytesRead: number; largestRead: number } {
  const inner = bytesSource(bytes)
  const counted = {
    byteLength: inner.byteLength,
    bytesRead: 0,
    largestRead: 0,
    async read(offset: number, length: number) {
      const part = await inner.read(offset, length)
      counted.bytesRead += part.byteLength
      counted.largestRead = Math.max(counted.largestRead, part.byteLength)
      return part
    },
  }
  return counted
}

async function decodeError(promise: Promise<unknown>): Promise<ImageDecodeError> {
  const error = await promise.then(
    () => null,
    (err: unknown) => err,
  )
  expect(error).toBeInstanceOf(ImageDecodeError)
  return error as ImageDecodeError
}

describe('probeImage and decodeFrame through a ByteSource', () => {
  const stack = encodeTiff(Array.from({ length: PAGES }, (_, p) => frame(p)), { pixelSizeNm: 80 })

  it('When an 8-page 16-bit stack is probed, then the header equals the in-memory one and only the directories are read', async () => {
    const source = countingSource(stack)
    const header = await probeImage(source, 'stack.tif')
    expect(header).toEqual(await probeImage(stack, 'stack.tif'))
    expect(header).toMatchObject({ format: 'tiff', width: WIDTH, height: HEIGHT, frameCount: PAGES, bitDepth: 16 })
    // Constructed: 8 directories with their strip tables and the header reads come to a few kB of a 512 kB file.
    expect(stack.byteLength).toBeGreaterThan(PAGES * PAGE_BYTES)
    expect(source.bytesRead).toBeLessThan(16 * 1024)
    expect(source.largestRead).toBeLessThan(2048)
  })

  it('When frames are decoded one by one, then each equals the file and costs about one page of reads', async () => {
    const source = countingSource(stack)
    await probeImage(source, 'stack.tif')
    for (const page of [0, 5, PAGES - 1]) {
      const before = source.bytesRead
      const decoded = await decodeFrame(source, 'stack.tif', page)
      expect(decoded.data).toEqual(frame(page).data)
      // Constructed: the page's strips (PAGE_BYTES) plus geotiff's reads of its directory and strip tables.
      expect(source.bytesRead - before).toBeGreaterThanOrEqual(PAGE_BYTES)
      expect(source.bytesRead - before).toBeLessThan(PAGE_BYTES + 16 * 1024)
    }
  })

  it('When the stack is cut off inside its last page, then corrupt-image (400) naming the truncation', async () => {
    const cut = stack.subarray(0, stack.byteLength - PAGE_BYTES / 2)
    const error = await decodeError(probeImage(countingSource(cut), 'cut.tif'))
    expect({ code: error.code, status: error.status, fileName: error.fileName }).toEqual({ code: 'corrupt-image', status: 400, fileName: 'cut.tif' })
    expect(error.message).toContain('truncated')
  })

  it('When a page declares 100,000 × 100,000 pixels over a few bytes (a decompression bomb), then image-too-large (413) after reading its directory only', async () => {
    const bomb = encodeTiff([{ width: 8, height: 8, data: new Uint16Array(64) }]).slice()
    const view = new DataView(bomb.buffer)
    const directory = view.getUint32(4, true)
    // encodeTiff sorts entries by tag: ImageWidth (256) then ImageLength (257), each a LONG held in the entry.
    expect([view.getUint16(directory + 2, true), view.getUint16(directory + 14, true)]).toEqual([256, 257])
    view.setUint32(directory + 2 + 8, 100_000, true)
    view.setUint32(directory + 14 + 8, 100_000, true)
    const source = countingSource(bomb)
    const error = await decodeError(probeImage(source, 'bomb.tif'))
    expect({ code: error.code, status: error.status }).toEqual({ code: 'image-too-large', status: 413 })
    expect(source.bytesRead).toBeLessThan(512)
  })

  it('When a large text file is named .tif, then unsupported-type (415) after reading its first 64 bytes', async () => {
    const text = new TextEncoder().encode('frame,field_mT\n'.repeat(100_000))
    const source = countingSource(text)
    const error = await decodeError(probeImage(source, 'notes.tif'))
    expect({ code: error.code, status: error.status }).toEqual({ code: 'unsupported-type', status: 415 })
    expect(error.message).toContain('text')
    expect(source.bytesRead).toBe(64)
  })
})
