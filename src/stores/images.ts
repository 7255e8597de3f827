/**
 * Images: the filtered, sorted, paginated list (the server does the filtering), each opened image's detail, and all
 * the images of a project (comparison pickers) or of a sample (its page). Loads record failures in `error` for a
 * Retry; edits throw for the form that started them.
 */
import { reactive, ref, shallowRef, watch } from 'vue'
import { defineStore } from 'pinia'
import type { ImageDetailDto, ImageSummaryDto } from '@shared/types/image'
import { asApiError, type ApiError } from '@/api/http'
import {
  assignImages,
  getImage,
  listImages,
  updateFrames,
  updateImage,
  type FrameConditions,
  type ImageFilters,
  type ImageListQuery,
  type ImagePatch,
  type ImageSort,
  type SortOrder,
} from '@/api/images'
import { clearFramePixelCache } from '@/composables/useFramePixels'
import type { LoadStatus } from './loadStatus'
import { useSessionStore } from './session'

export const DEFAULT_IMAGE_QUERY: Readonly<ImageListQuery> = {
  projectId: null,
  sampleId: null,
  technique: null,
  status: null,
  from: null,
  to: null,
  search: '',
  page: 1,
  pageSize: 25,
  sort: 'createdAt',
  order: 'desc',
}

interface ImageDetailEntry {
  status: LoadStatus
  item: ImageDetailDto | null
  error: ApiError | null
}

/** All the images of one project or one sample (a comparison picker, a sample page), by name. */
interface ImageGroupEntry {
  status: LoadStatus
  items: ImageSummaryDto[]
  /** How many there are; more than `items` holds when the group is longer than one page. */
  total: number
  error: ApiError | null
}

/** How many images of one project or sample are listed (the server's largest page). */
const GROUP_PAGE_SIZE = 200

export const useImagesStore = defineStore('images', () => {
  const query = ref<ImageListQuery>({ ...DEFAULT_IMAGE_QUERY })
  const items = ref<ImageSummaryDto[]>([])
  const total = ref(0)
  const status = ref<LoadStatus>('idle')
  const error = shallowRef<ApiError | null>(null)
  const details = reactive(new Map<number, ImageDetailEntry>())
  const projectImages = reactive(new Map<number, ImageGroupEntry>())
  const sampleImages = reactive(new Map<number, ImageGroupEntry>())
  let latestList = 0

  async function fetchImages(): Promise<void> {
    const mine = ++latestList
    status.value = 'loading'
    error.value = null
    try {
      const page = await listImages(query.value)
      // Filters typed quickly send several requests; only the last one's answer is shown.
      if (mine !== latestList) return
      items.value = page.items
      total.value = page.total
      status.value = 'ready'
    } catch (e) {
      if (mine !== latestList) return
      error.value = asApiError(e)
      status.value = 'error'
    }
  }

  /** Narrow the list; any change of filter starts again at page 1. */
  function setFilters(filters: Partial<ImageFilters>): Promise<void> {
    query.value = { ...query.value, ...filters, page: 1 }
    return fetchImages()
  }

  function clearFilters(): Promise<void> {
    return showOnly({})
  }

  /** Only these filters, every other one cleared (a link to a project's or a sample's images); sort and page size stay. */
  function showOnly(filters: Partial<ImageFilters>): Promise<void> {
    query.value = { ...DEFAULT_IMAGE_QUERY, pageSize: query.value.pageSize, sort: query.value.sort, order: query.value.order, ...filters }
    return fetchImages()
  }

  function setPage(page: number, pageSize = query.value.pageSize): Promise<void> {
    query.value = { ...query.value, page: pageSize === query.value.pageSize ? page : 1, pageSize }
    return fetchImages()
  }

  function setSort(sort: ImageSort, order: SortOrder): Promise<void> {
    query.value = { ...query.value, sort, order, page: 1 }
    return fetchImages()
  }

  function detailOf(imageId: number): ImageDetailEntry {
    return details.get(imageId) ?? { status: 'idle', item: null, error: null }
  }

  async function fetchImage(imageId: number): Promise<void> {
    if (!details.has(imageId)) details.set(imageId, { status: 'idle', item: null, error: null })
    const entry = details.get(imageId)!
    entry.status = 'loading'
    entry.error = null
    try {
      entry.item = await getImage(imageId)
      entry.status = 'ready'
    } catch (e) {
      entry.error = asApiError(e)
      entry.status = 'error'
    }
  }

  /** Load an image's detail once; later calls reuse it (the viewer and its comparison pane). */
  async function ensureImage(imageId: number): Promise<void> {
    if (detailOf(imageId).status === 'idle') await fetchImage(imageId)
  }

  function remember(image: ImageDetailDto): ImageDetailDto {
    details.set(image.id, { status: 'ready', item: image, error: null })
    const row = items.value.findIndex((i) => i.id === image.id)
    if (row !== -1) items.value[row] = { ...items.value[row], ...summaryOf(image) }
    return image
  }

  async function saveMetadata(imageId: number, patch: ImagePatch): Promise<ImageDetailDto> {
    return remember(await updateImage(imageId, patch))
  }

  async function saveFrames(imageId: number, frames: FrameConditions[]): Promise<ImageDetailDto> {
    return remember(await updateFrames(imageId, frames))
  }

  /** Assign (or with `null` unassign) every frame of the images, then reload the list and any opened detail. */
  async function assign(imageIds: number[], assigneeId: number | null): Promise<number> {
    const { updatedImages } = await assignImages(imageIds, assigneeId)
    for (const id of imageIds) if (details.has(id)) void fetchImage(id)
    await fetchImages()
    return updatedImages
  }

  async function fetchGroup(groups: Map<number, ImageGroupEntry>, id: number, filter: Partial<ImageFilters>): Promise<void> {
    if (!groups.has(id)) groups.set(id, { status: 'idle', items: [], total: 0, error: null })
    const entry = groups.get(id)!
    entry.status = 'loading'
    entry.error = null
    try {
      const page = await listImages({ ...DEFAULT_IMAGE_QUERY, ...filter, pageSize: GROUP_PAGE_SIZE, sort: 'name', order: 'asc' })
      entry.items = page.items
      entry.total = page.total
      entry.status = 'ready'
    } catch (e) {
      entry.error = asApiError(e)
      entry.status = 'error'
    }
  }

  function fetchProjectImages(projectId: number): Promise<void> {
    return fetchGroup(projectImages, projectId, { projectId })
  }

  function imagesOfProject(projectId: number): ImageGroupEntry {
    return projectImages.get(projectId) ?? { status: 'idle', items: [], total: 0, error: null }
  }

  function fetchSampleImages(sampleId: number): Promise<void> {
    return fetchGroup(sampleImages, sampleId, { sampleId })
  }

  function imagesOfSample(sampleId: number): ImageGroupEntry {
    return sampleImages.get(sampleId) ?? { status: 'idle', items: [], total: 0, error: null }
  }

  function reset(): void {
    query.value = { ...DEFAULT_IMAGE_QUERY }
    items.value = []
    total.value = 0
    status.value = 'idle'
    error.value = null
    details.clear()
    projectImages.clear()
    sampleImages.clear()
    clearFramePixelCache()
  }

  // Another person signing in must not see the previous person's images.
  const session = useSessionStore()
  watch(() => session.user?.id, reset)

  return {
    query,
    items,
    total,
    status,
    error,
    fetchImages,
    setFilters,
    clearFilters,
    showOnly,
    setPage,
    setSort,
    detailOf,
    fetchImage,
    ensureImage,
    saveMetadata,
    saveFrames,
    assign,
    fetchProjectImages,
    imagesOfProject,
    fetchSampleImages,
    imagesOfSample,
    reset,
  }
})

function summaryOf(image: ImageDetailDto): Partial<ImageSummaryDto> {
  const { name, technique, sampleId, pixelSizeNm, acquiredAt, annotationStatus } = image
  return { name, technique, sampleId, pixelSizeNm, acquiredAt, annotationStatus }
}
