import { computed, ref, shallowRef, type ComputedRef, type Ref, type ShallowRef } from 'vue'
import type { FrameDto, ImageDetailDto } from '@shared/types/image'
import { getQueue } from '@/api/annotations'
import { ApiError, asApiError } from '@/api/http'
import { useImagesStore } from '@/stores/images'
import { useProjectsStore } from '@/stores/projects'

export interface WorkspaceFrame {
  /** The frame's image, once found. */
  imageId: Ref<number | null>
  image: ComputedRef<ImageDetailDto | null>
  frame: ComputedRef<FrameDto | null>
  /** The lab of the image's project (for the person's role there), once the projects are loaded. */
  labId: ComputedRef<number | undefined>
  /** Why the frame or its image could not be found or loaded. */
  error: ShallowRef<ApiError | null>
  load: () => Promise<void>
}

/**
 * The image and lab a frame belongs to. The workspace link carries the image id (`?image=`); without it the frame
 * is looked up in the annotation queue (the person's own frames, then every assigned frame of their labs).
 */
export function useWorkspaceFrame(frameId: Ref<number>, linkedImageId: Ref<number | null>): WorkspaceFrame {
  const imagesStore = useImagesStore()
  const projectsStore = useProjectsStore()
  const imageId = ref<number | null>(null)
  const error = shallowRef<ApiError | null>(null)
  let request = 0

  const entry = computed(() => (imageId.value === null ? null : imagesStore.detailOf(imageId.value)))
  const image = computed(() => entry.value?.item ?? null)
  const frame = computed(() => image.value?.frames.find((f) => f.id === frameId.value) ?? null)
  const labId = computed(() => (image.value ? projectsStore.projectById(image.value.projectId)?.labId : undefined))

  async function findImageId(): Promise<number | null> {
    if (linkedImageId.value !== null) return linkedImageId.value
    const mine = await getQueue({ mine: true })
    const found = mine.find((f) => f.frameId === frameId.value) ?? (await getQueue({ mine: false })).find((f) => f.frameId === frameId.value)
    return found?.imageId ?? null
  }

  async function load(): Promise<void> {
    const mine = ++request
    imageId.value = null
    error.value = null
    try {
      const found = await findImageId()
      if (mine !== request) return
      if (found === null) {
        error.value = new ApiError(404, 'frame-not-found', 'This frame is not in an annotation queue. Open it from its image page (Annotate).')
        return
      }
      imageId.value = found
      await Promise.all([imagesStore.ensureImage(found), projectsStore.ensureProjects()])
      if (mine !== request) return
      const detail = imagesStore.detailOf(found)
      if (detail.status === 'error') error.value = detail.error
    } catch (e) {
      if (mine === request) error.value = asApiError(e)
    }
  }

  return { imageId, image, frame, labId, error, load }
}
