/**
 * A file on disk as a ByteSource (how ingest reads an upload multer has written): ranges come back exactly, cut short at
 * the end of the file, and a stack on disk probes and decodes like the same bytes in memory.
 */
import { afterAll, describe, expect, it } from 'vitest'
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import path from 'node:path'
import { openFileByteSource, withFileByteSource } from '../../server/storage/fileByteSource'
import { ImageDecodeError, decodeFrame, probeImage } from '../../shared/imageio/decodeImage'
import { encodeTiff } from '../../shared/imageio/encodeTiff'

const folder = mkdtempSync(path.join(tmpdir(), 'remanence-byte-source-'))
afterAll(() => rmSync(folder, { recursive: true, force: true }))

function fileWith(name: string, bytes: Uint8Array): string {
  const file = path.join(folder, name)
  writeFileSync(file, bytes)
  return file
}

describe('openFileByteSource', () => {
  it('When ranges are read, then they hold exactly the file bytes, cut short at the end and empty past it', async () => {
    const bytes = Uint8Array.from({ length: 1000 }, (_, i) => (i * 7) % 256)
    const source = await openFileByteSource(fileWith('ramp.bin', bytes))
    try {
      expect(source.byteLength).toBe(1000)
      expect(await source.read(10, 20)).toEqual(bytes.subarray(10, 30))
      expect(await source.read(990, 64)).toEqual(bytes.subarray(990))
      expect((await source.read(1000, 8)).byteLength).toBe(0)
      expect((await source.read(5000, 8)).byteLength).toBe(0)
    } finally {
      await source.close()
    }
  })

  it('When a 4-page stack on disk is probed and decoded, then header and pixels equal those from memory', async () => {
    const frames = Array.from({ length: 4 }, (_, p) => ({ width: 64, height: 48, data: Uint16Array.from({ length: 64 * 48 }, (_, i) => (i * 13 + p * 4001) % 65536) }))
    const bytes = encodeTiff(frames, { pixelSizeNm: 120 })
    await withFileByteSource(fileWith('stack.tif', bytes), async (source) => {
      expect(await probeImage(source, 'stack.tif')).toEqual(await probeImage(bytes, 'stack.tif'))
      expect((await decodeFrame(source, 'stack.tif', 3)).data).toEqual(frames[3].data)
    })
  })

  it('When the stack on disk is cut short, then corrupt-image', async () => {
    const bytes = encodeTiff([{ width: 64, height: 48, data: new Uint16Array(64 * 48) }, { width: 64, height: 48, data: new Uint16Array(64 * 48) }])
    const error = await withFileByteSource(fileWith('cut.tif', bytes.subarray(0, bytes.byteLength - 3000)), (source) => probeImage(source, 'cut.tif')).then(
      () => null,
      (err: unknown) => err,
    )
    expect(error).toBeInstanceOf(ImageDecodeError)
    expect((error as ImageDecodeError).code).toBe('corrupt-image')
  })
})
