import type { QueueFrameDto } from '@shared/types/annotation'

/** A queue entry as GET /api/queue answers it, with test-specific fields overridden. */
export function queueFrame(overrides: Partial<QueueFrameDto> = {}): QueueFrameDto {
  return {
    frameId: 1,
    imageId: 10,
    imageName: 'KB24-A250_sweep.tif',
    frameIndex: 0,
    frameCount: 1,
    field: null,
    fieldUnit: null,
    temperatureK: null,
    status: 'new',
    assignee: { id: 4, name: 'Priya Raman' },
    projectId: 3,
    projectName: 'CoFeB anneal series',
    latestVersion: null,
    updatedAt: '2026-03-02T10:00:00.000Z',
    ...overrides,
  }
}
