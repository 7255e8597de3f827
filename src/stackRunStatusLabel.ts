import type { StackRunDto, StackRunStatus } from '@shared/types/stack'

/** Element Plus tag/progress colour of each status. */
export const STACK_RUN_STATUS_TYPES: Record<StackRunStatus, 'info' | 'primary' | 'success' | 'warning' | 'danger'> = {
  queued: 'info',
  running: 'primary',
  done: 'success',
  'done-with-errors': 'warning',
  failed: 'danger',
}

/**
 * A run's state in plain words: "Waiting for a worker", "Processing frame 3 of 41", "Computing the loop and fits"
 * (every frame measured, the stack summary still running), "Done", "Done, some frames failed", "Failed".
 */
export function stackRunStatusLabel(run: Pick<StackRunDto, 'status' | 'framesDone' | 'framesTotal'>): string {
  switch (run.status) {
    case 'queued':
      return 'Waiting for a worker'
    case 'running':
      return run.framesDone >= run.framesTotal ? 'Computing the loop and fits' : `Processing frame ${run.framesDone + 1} of ${run.framesTotal}`
    case 'done':
      return 'Done'
    case 'done-with-errors':
      return 'Done, some frames failed'
    case 'failed':
      return 'Failed'
  }
}

/** Share of frames measured, 0–100, for a progress bar. */
export function stackRunPercent(run: Pick<StackRunDto, 'status' | 'framesDone' | 'framesTotal'>): number {
  if (run.status === 'done' || run.status === 'done-with-errors') return 100
  return run.framesTotal > 0 ? Math.min(100, Math.round((100 * run.framesDone) / run.framesTotal)) : 0
}
