/** Images and their frames: list, detail, metadata edits, assignment, raw pixels, and the upload with progress. */
import type { Page } from '@shared/types/api'
import type { FrameAnnotationStatus, ImageDetailDto, ImageSummaryDto, UploadedImageDto } from '@shared/types/image'
import type { Technique } from '@shared/types/lab'
import type { FieldUnit } from '@shared/units/magneticUnits'
import { ApiError, apiErrorFromText, apiUrl, csrfHeaders, http, requestBytes } from './http'

export type ImageSort = 'name' | 'createdAt' | 'frameCount' | 'technique'
export type SortOrder = 'asc' | 'desc'

/** What the list can be narrowed by; `null` or '' means "any". Dates are ISO timestamps (creation time). */
export interface ImageFilters {
  projectId: number | null
  sampleId: number | null
  technique: Technique | null
  status: FrameAnnotationStatus | null
  from: string | null
  to: string | null
  search: string
}

export interface ImageListQuery extends ImageFilters {
  page: number
  pageSize: number
  sort: ImageSort
  order: SortOrder
}

/** The query string of GET /images for `query`, leaving out every "any" filter (so the server applies no condition). */
export function imageListSearch(query: ImageListQuery): string {
  const params = new URLSearchParams()
  const filters: [string, string | number | null][] = [
    ['projectId', query.projectId],
    ['sampleId', query.sampleId],
    ['technique', query.technique],
    ['status', query.status],
    ['from', query.from],
    ['to', query.to],
    ['search', query.search.trim()],
  ]
  for (const [key, value] of filters) if (value !== null && value !== '') params.set(key, String(value))
  params.set('page', String(query.page))
  params.set('pageSize', String(query.pageSize))
  params.set('sort', query.sort)
  params.set('order', query.order)
  return params.toString()
}

export function listImages(query: ImageListQuery): Promise<Page<ImageSummaryDto>> {
  return http.get<Page<ImageSummaryDto>>(`/images?${imageListSearch(query)}`)
}

export function getImage(imageId: number): Promise<ImageDetailDto> {
  return http.get<ImageDetailDto>(`/images/${imageId}`)
}

export type PixelSizeSource = 'typed' | 'scale-bar' | 'tiff-resolution' | 'tiff-description'

/** A PATCH changes only the fields it sends; the server records before and after in the audit log. */
export interface ImagePatch {
  name?: string
  technique?: Technique
  sampleId?: number | null
  pixelSizeNm?: number | null
  pixelSizeSource?: PixelSizeSource
  notes?: string
  acquiredAt?: string | null
}

/** Needs `image.editMetadata` in the image's lab. */
export function updateImage(imageId: number, patch: ImagePatch): Promise<ImageDetailDto> {
  return http.patch<ImageDetailDto>(`/images/${imageId}`, patch)
}

/** The experimental conditions of one frame; a field without a unit is not accepted by the server. */
export interface FrameConditions {
  index: number
  field: number | null
  fieldUnit: FieldUnit | null
  temperatureK: number | null
}

/** Sets the listed frames only (audited); needs `image.editMetadata`. */
export function updateFrames(imageId: number, frames: FrameConditions[]): Promise<ImageDetailDto> {
  return http.put<ImageDetailDto>(`/images/${imageId}/frames`, { frames })
}

/** Assign every frame of the images to an annotator, or unassign them with `null`; needs `image.assign`. */
export function assignImages(imageIds: number[], assigneeId: number | null): Promise<{ updatedImages: number }> {
  return http.post<{ updatedImages: number }>('/images/assign', { imageIds, assigneeId })
}

/** Where the browser loads a frame's PNG renderings from (cached by the browser for a day). */
export function frameImageUrl(imageId: number, index: number, kind: 'preview.png' | 'thumbnail.png'): string {
  return apiUrl(`/images/${imageId}/frames/${index}/${kind}`)
}

/** One frame's pixels as stored: 8-bit and 16-bit unsigned integers, or 32-bit floats. */
export interface RawFrame {
  width: number
  height: number
  bitDepth: 8 | 16 | 32
  data: Uint8Array | Uint16Array | Float32Array
}

/** The raw little-endian pixels of a frame, typed by the X-Bit-Depth header. */
export async function getFramePixels(imageId: number, index: number): Promise<RawFrame> {
  const { bytes, headers } = await requestBytes(`/images/${imageId}/frames/${index}/pixels.bin`)
  const width = Number(headers.get('X-Width'))
  const height = Number(headers.get('X-Height'))
  const bitDepth = Number(headers.get('X-Bit-Depth'))
  const count = width * height
  const data = bitDepth === 8 ? new Uint8Array(bytes) : bitDepth === 16 ? new Uint16Array(bytes) : bitDepth === 32 ? new Float32Array(bytes) : null
  if (!(count > 0) || data === null || data.length !== count) {
    throw new ApiError(0, 'bad-pixels', `Frame ${index} arrived malformed (${bytes.byteLength} bytes for ${width} × ${height} px at ${bitDepth} bit).`)
  }
  return { width, height, bitDepth: bitDepth as RawFrame['bitDepth'], data }
}

/** The form fields sent with each uploaded file. */
export interface UploadFields {
  sampleId: number | null
  technique: Technique
  pixelSizeNm: number | null
  notes: string
  acquiredAt: string | null
}

export interface UploadProgress {
  loaded: number
  total: number
}

export interface UploadRequestOptions {
  /** A frames CSV (`frame,field_mT`, `frame,temperature_K`, ...) for this file's frames. */
  framesCsv?: File | null
  onProgress?: (progress: UploadProgress) => void
  /** Aborting cancels the request; the promise then rejects with code `upload-cancelled`. */
  signal?: AbortSignal
}

/**
 * Upload one image or stack to a project (multipart, field `files`), reporting the bytes sent. Resolves to the
 * server's answer for the file, with `duplicateOf` when the same bytes were already in the project.
 * Throws `ApiError`: the server's code and message (400, 413, 415, 503, ...), `network-error`, or `upload-cancelled`.
 */
export function uploadImage(projectId: number, file: File, fields: UploadFields, options: UploadRequestOptions = {}): Promise<UploadedImageDto> {
  const form = new FormData()
  form.append('files', file, file.name)
  if (options.framesCsv) form.append('frames', options.framesCsv, options.framesCsv.name)
  if (fields.sampleId !== null) form.append('sampleId', String(fields.sampleId))
  form.append('technique', fields.technique)
  if (fields.pixelSizeNm !== null) form.append('pixelSizeNm', String(fields.pixelSizeNm))
  if (fields.notes.trim() !== '') form.append('notes', fields.notes)
  if (fields.acquiredAt !== null) form.append('acquiredAt', fields.acquiredAt)

  return new Promise<UploadedImageDto>((resolve, reject) => {
    const xhr = new XMLHttpRequest()
    const onAbortSignal = () => xhr.abort()
    const settle = (outcome: () => void) => {
      options.signal?.removeEventListener('abort', onAbortSignal)
      outcome()
    }
    xhr.open('POST', apiUrl(`/projects/${projectId}/images`))
    xhr.setRequestHeader('Accept', 'application/json')
    for (const [name, value] of Object.entries(csrfHeaders())) xhr.setRequestHeader(name, value)
    xhr.upload.onprogress = (event) => options.onProgress?.({ loaded: event.loaded, total: event.lengthComputable ? event.total : file.size })
    xhr.onload = () =>
      settle(() => {
        if (xhr.status < 200 || xhr.status >= 300) return reject(apiErrorFromText(xhr.status, xhr.responseText))
        const answer = parseUploadAnswer(xhr.responseText)
        if (answer) resolve(answer)
        else reject(new ApiError(xhr.status, 'unexpected-answer', `The server stored ${file.name} but its answer could not be read. Reload the images list to check.`))
      })
    xhr.onerror = () => settle(() => reject(new ApiError(0, 'network-error', 'The server could not be reached. Check your connection and try again.')))
    xhr.onabort = () => settle(() => reject(new ApiError(0, 'upload-cancelled', 'Upload cancelled.')))
    if (options.signal?.aborted) return reject(new ApiError(0, 'upload-cancelled', 'Upload cancelled.'))
    options.signal?.addEventListener('abort', onAbortSignal, { once: true })
    xhr.send(form)
  })
}

function parseUploadAnswer(text: string): UploadedImageDto | null {
  try {
    const body: unknown = JSON.parse(text)
    return Array.isArray(body) && body.length > 0 ? (body[0] as UploadedImageDto) : null
  } catch {
    return null
  }
}
