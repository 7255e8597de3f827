/**
 * A file on the server's disk (an upload multer has written) as a ByteSource: the image readers take the ranges they
 * need, so checking and decoding a stack holds its headers and one frame, never the whole file.
 */
import { open } from 'node:fs/promises'
import type { ByteSource } from '../../shared/imageio/byteSource'

export interface FileByteSource extends ByteSource {
  close(): Promise<void>
}

export async function openFileByteSource(path: string): Promise<FileByteSource> {
  const handle = await open(path, 'r')
  const { size } = await handle.stat()
  return {
    byteLength: size,
    async read(offset, length) {
      const wanted = Math.max(0, Math.min(length, size - offset))
      const bytes = new Uint8Array(wanted)
      let filled = 0
      while (filled < wanted) {
        const { bytesRead } = await handle.read(bytes, filled, wanted - filled, offset + filled)
        if (bytesRead === 0) break
        filled += bytesRead
      }
      return filled === wanted ? bytes : bytes.subarray(0, filled)
    },
    close: () => handle.close(),
  }
}

/** Run `work` with the file open as a ByteSource, and close it whatever happens. */
export async function withFileByteSource<T>(path: string, work: (source: ByteSource) => Promise<T>): Promise<T> {
  const source = await openFileByteSource(path)
  try {
    return await work(source)
  } finally {
    await source.close()
  }
}
