/**
 * Random access to an image file's bytes, range by range. The header readers and the TIFF decoder take a ByteSource,
 * so the server can check and decode an upload straight from disk, holding the ranges it reads (headers, one page's
 * strips) rather than the whole file; browsers and workers that hold the bytes already wrap them with `bytesSource`.
 */

export interface ByteSource {
  /** Length of the file in bytes. */
  readonly byteLength: number
  /**
   * Bytes `offset` … `offset + length − 1`, cut short at the end of the file (so fewer than `length` there, none past
   * it). The result may share memory with the source: read it, do not change it.
   */
  read(offset: number, length: number): Promise<Uint8Array>
}

/** A ByteSource over bytes in memory; reads are views, not copies. */
export function bytesSource(bytes: Uint8Array): ByteSource {
  return {
    byteLength: bytes.byteLength,
    read: async (offset, length) => bytes.subarray(Math.min(offset, bytes.byteLength), Math.min(offset + length, bytes.byteLength)),
  }
}

/** The whole file: `bytes` itself, or everything read from the source (for decoders that take one buffer). */
export async function wholeFile(input: Uint8Array | ByteSource): Promise<Uint8Array> {
  return input instanceof Uint8Array ? input : input.read(0, input.byteLength)
}
