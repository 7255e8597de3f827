import { describe, expect, it } from 'vitest'
import { stackRunPercent, stackRunStatusLabel } from '@/stackRunStatusLabel'

describe('stackRunStatusLabel', () => {
  it.each([
    [{ status: 'queued', framesDone: 0, framesTotal: 41 }, 'Waiting for a worker', 0],
    [{ status: 'running', framesDone: 0, framesTotal: 41 }, 'Processing frame 1 of 41', 0],
    [{ status: 'running', framesDone: 20, framesTotal: 41 }, 'Processing frame 21 of 41', 49],
    [{ status: 'running', framesDone: 41, framesTotal: 41 }, 'Computing the loop and fits', 100],
    [{ status: 'done', framesDone: 41, framesTotal: 41 }, 'Done', 100],
    [{ status: 'done-with-errors', framesDone: 41, framesTotal: 41 }, 'Done, some frames failed', 100],
    [{ status: 'failed', framesDone: 3, framesTotal: 41 }, 'Failed', 7],
  ] as const)('When a run is %o, then it reads "%s" at %i %%', (run, label, percent) => {
    expect(stackRunStatusLabel(run)).toBe(label)
    expect(stackRunPercent(run)).toBe(percent)
  })
})
