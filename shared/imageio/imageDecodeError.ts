/**
 * The one error type the image readers throw for bad input: a kebab-case code, the HTTP status the server answers
 * with, and a message that names the file and says what is wrong in words a microscopist can act on.
 */

export const IMAGE_DECODE_ERROR_STATUS = {
  'empty-file': 400,
  'unsupported-type': 415,
  'corrupt-image': 400,
  'image-too-large': 413,
  'too-many-frames': 413,
} as const

export type ImageDecodeErrorCode = keyof typeof IMAGE_DECODE_ERROR_STATUS

/** Bad image input. `message` starts with the quoted file name. */
export class ImageDecodeError extends Error {
  readonly code: ImageDecodeErrorCode
  readonly status: 400 | 413 | 415
  readonly fileName: string

  constructor(code: ImageDecodeErrorCode, fileName: string, detail: string) {
    super(`"${fileName}": ${detail}`)
    this.name = 'ImageDecodeError'
    this.code = code
    this.status = IMAGE_DECODE_ERROR_STATUS[code]
    this.fileName = fileName
  }
}
