import type { FrameAnnotationStatus } from '@shared/types/image'

/** How an image's annotation progress reads in lists and filters (its frames all new, some started, all submitted). */
export const ANNOTATION_STATUS_LABELS: Record<FrameAnnotationStatus, string> = {
  new: 'Not started',
  'in-progress': 'In progress',
  submitted: 'Submitted',
}

/** The Element Plus tag colour of each status. */
export const ANNOTATION_STATUS_TAG: Record<FrameAnnotationStatus, 'info' | 'warning' | 'success'> = {
  new: 'info',
  'in-progress': 'warning',
  submitted: 'success',
}
