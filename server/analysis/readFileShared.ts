/**
 * Reads a file straight into shared memory, so that a stack can be handed to the analysis pool without a second copy
 * of its bytes (createAnalysisPool's shareFile shares a SharedArrayBuffer-backed array as it is).
 */
import { closeSync, fstatSync, openSync, readSync } from 'node:fs'

/**
 * The whole file as a Uint8Array over a SharedArrayBuffer of exactly its size.
 * @throws the fs error (ENOENT, EISDIR, …) when the file cannot be read.
 */
export function readFileShared(path: string): Uint8Array {
  const fd = openSync(path, 'r')
  try {
    const size = fstatSync(fd).size
    const bytes = new Uint8Array(new SharedArrayBuffer(size))
    let offset = 0
    while (offset < size) {
      const read = readSync(fd, bytes, offset, size - offset, offset)
      // The file shrank while being read: keep what is there (the decoder reports the truncation).
      if (read === 0) return bytes.subarray(0, offset)
      offset += read
    }
    return bytes
  } finally {
    closeSync(fd)
  }
}
