import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { createPinia, setActivePinia } from 'pinia'
import { maskFromBase64 } from '@shared/imageio/maskEncoding'
import type { AnalysisDto, AnnotationVersionDto } from '@shared/types/annotation'
import { paintDisc } from '@/maskRaster'
import { AUTOSAVE_DELAY_MS, useWorkspaceStore } from '@/stores/workspace'
import { errorResponse, jsonResponse, stubFetch, type RecordedRequest } from '../fakeApi'

const FRAME = 41
const SIZE = 64

function version(v: number | null, state: 'saved' | 'conflict' = 'saved', id = 100 + (v ?? 0)): AnnotationVersionDto {
  return { id, version: v, state, basedOnVersion: v === null ? 1 : v - 1, author: { id: 7, name: 'Ada Annotator' }, createdAt: '2026-04-01T10:00:00.000Z' }
}

function analysis(annotationVersion: number): AnalysisDto {
  return {
    id: 500 + annotationVersion,
    frameId: FRAME,
    annotationId: 100 + annotationVersion,
    annotationVersion,
    recipe: {} as AnalysisDto['recipe'],
    engineVersion: '1.0.0',
    status: 'draft' as AnalysisDto['status'],
    measurements: null,
    distributions: null,
    error: null,
    createdAt: '2026-04-01T10:00:00.000Z',
  }
}

/** The server's side of a frame with no saved mask: every save answers with the next version (or what `answer` says). */
function frameServer(answer?: (request: RecordedRequest) => Response) {
  let latest = 0
  const requests = stubFetch({
    [`GET /api/frames/${FRAME}/annotations/latest`]: () => errorResponse(404, 'annotation-not-found', 'No such annotation.'),
    [`GET /api/frames/${FRAME}/annotations`]: () => jsonResponse(200, []),
    [`GET /api/frames/${FRAME}/analysis`]: () => jsonResponse(200, null),
    [`PUT /api/frames/${FRAME}/status`]: (request) => jsonResponse(200, { frameId: FRAME, ...(request.body as object) }),
    [`POST /api/analyses/${analysis(1).id}/submit`]: () => jsonResponse(200, { ...analysis(1), status: 'submitted' }),
    [`POST /api/frames/${FRAME}/annotations`]: (request) => {
      if (answer) return answer(request)
      latest++
      return jsonResponse(201, { annotation: version(latest), analysis: analysis(latest) })
    },
  })
  return { requests, saves: () => requests.filter((r) => r.method === 'POST') }
}

async function openedStore() {
  const store = useWorkspaceStore()
  store.editable = true
  await store.open({ frameId: FRAME, width: SIZE, height: SIZE })
  return store
}

/** Paint a disc of the up phase into the store's mask and commit it, as the brush tool does. */
function paint(store: ReturnType<typeof useWorkspaceStore>, x: number, y: number) {
  const rect = paintDisc(store.mask!, x, y, 5, 1)!
  store.commitEdit(rect, 'Paint up')
}

beforeEach(() => setActivePinia(createPinia()))
afterEach(() => {
  vi.useRealTimers()
})

describe('useWorkspaceStore opening', () => {
  it('When the frame has no saved mask yet, then an all-down mask of the frame size is edited from no version', async () => {
    frameServer()
    const store = await openedStore()
    expect(store.status).toBe('ready')
    expect(store.mask?.data.length).toBe(SIZE * SIZE)
    expect(store.upPixels).toBe(0)
    expect(store.baseVersion).toBeNull()
    expect(store.saveState).toBe('empty')
  })
})

describe('useWorkspaceStore save', () => {
  it('When a save answers 201, then the version goes up, the mask sent is the edited one, and the analysis is shown', async () => {
    const { saves } = frameServer()
    const store = await openedStore()
    paint(store, 20, 20)
    expect(store.saveState).toBe('unsaved')

    expect(await store.save()).toBe(true)
    expect(store.baseVersion).toBe(1)
    expect(store.saveState).toBe('saved')
    expect(store.analysis?.annotationVersion).toBe(1)
    const sent = saves()[0].body as { baseVersion: number | null; mask: string }
    expect(sent.baseVersion).toBeNull()
    expect(Array.from(maskFromBase64(sent.mask).data)).toEqual(Array.from(store.mask!.data))

    paint(store, 40, 40)
    await store.save()
    expect((saves()[1].body as { baseVersion: number }).baseVersion).toBe(1)
    expect(store.baseVersion).toBe(2)
  })

  it('When a save answers 409, then the conflict is kept, the local mask stays as edited, and "keep mine" saves on top of the latest', async () => {
    let conflictNext = true
    const { saves } = frameServer((request) => {
      if (conflictNext) {
        conflictNext = false
        return jsonResponse(409, {
          error: { code: 'version-conflict', message: 'Someone saved version 2 of this mask while you were editing.' },
          latestVersion: 2,
          conflictCopy: version(null, 'conflict', 301),
        })
      }
      const base = (request.body as { baseVersion: number }).baseVersion
      return jsonResponse(201, { annotation: version(base + 1), analysis: analysis(base + 1) })
    })
    const store = await openedStore()
    paint(store, 30, 30)
    const edited = store.mask!.data.slice()
    const up = store.upPixels

    expect(await store.save()).toBe(false)
    expect(store.saveState).toBe('conflict')
    expect(store.conflict?.latestVersion).toBe(2)
    expect(store.conflict?.conflictCopy.id).toBe(301)
    expect(store.baseVersion).toBeNull()
    expect(store.dirty).toBe(true)
    expect(Array.from(store.mask!.data)).toEqual(Array.from(edited))
    expect(store.upPixels).toBe(up)
    // Undo still works on the kept edit.
    expect(store.canUndo).toBe(true)

    expect(await store.keepMine()).toBe(true)
    expect((saves()[1].body as { baseVersion: number }).baseVersion).toBe(2)
    expect(store.baseVersion).toBe(3)
    expect(store.conflict).toBeNull()
    expect(store.saveState).toBe('saved')
  })

  it('When the network is down, then the state is offline and the edits stay unsaved for a retry', async () => {
    frameServer(() => {
      throw new TypeError('Failed to fetch')
    })
    const store = await openedStore()
    paint(store, 10, 10)
    expect(await store.save()).toBe(false)
    expect(store.saveState).toBe('offline')
    expect(store.dirty).toBe(true)
  })

  it('When 20 s pass after the last edit, then the mask is saved automatically (and not before)', async () => {
    const { saves } = frameServer()
    const store = await openedStore()
    vi.useFakeTimers()
    paint(store, 10, 10)
    await vi.advanceTimersByTimeAsync(AUTOSAVE_DELAY_MS - 1000)
    paint(store, 50, 50)
    await vi.advanceTimersByTimeAsync(AUTOSAVE_DELAY_MS - 1000)
    expect(saves()).toHaveLength(0)
    await vi.advanceTimersByTimeAsync(1000)
    expect(saves()).toHaveLength(1)
    expect(store.saveState).toBe('saved')
  })

  it('When the person may not edit, then nothing is sent', async () => {
    const { saves } = frameServer()
    const store = await openedStore()
    store.editable = false
    paint(store, 10, 10)
    expect(await store.save()).toBe(false)
    expect(saves()).toHaveLength(0)
  })
})

describe('useWorkspaceStore submitForReview', () => {
  it('When unsaved edits are submitted, then they are saved first and then the saved version\'s analysis is submitted', async () => {
    const { requests } = frameServer()
    const store = await openedStore()
    paint(store, 12, 12)
    expect(await store.submitForReview()).toBe(true)
    // The save goes first, then the analysis it produced goes to the reviewers (the server marks the frame with it).
    expect(requests.filter((r) => r.method !== 'GET').map((r) => `${r.method} ${r.url}`)).toEqual([
      `POST /api/frames/${FRAME}/annotations`,
      `POST /api/analyses/${analysis(1).id}/submit`,
    ])
    expect(store.saveState).toBe('saved')
  })

  it('When a note for the reviewer is given, then it goes with the submission, trimmed; a blank note sends none', async () => {
    const { requests } = frameServer()
    const store = await openedStore()
    paint(store, 12, 12)
    expect(await store.submitForReview('  look at the scratch  ')).toBe(true)
    const submits = () => requests.filter((r) => r.url.endsWith('/submit'))
    expect(submits().map((r) => r.body)).toEqual([{ message: 'look at the scratch' }])
    expect(await store.submitForReview('   ')).toBe(true)
    expect(submits().map((r) => r.body)).toEqual([{ message: 'look at the scratch' }, {}])
  })
})

describe('useWorkspaceStore undo', () => {
  it('When an edit is undone and redone, then the up pixel count follows and the canvas is told what to redraw', async () => {
    frameServer()
    const store = await openedStore()
    paint(store, 20, 20)
    const painted = store.upPixels
    expect(painted).toBeGreaterThan(0)
    const revision = store.maskChange.revision
    store.undo()
    expect(store.upPixels).toBe(0)
    expect(store.maskChange.revision).toBe(revision + 1)
    expect(store.maskChange.rect).not.toBeNull()
    store.redo()
    expect(store.upPixels).toBe(painted)
  })

  it('When a preview replaces the mask, then it is one undoable step', async () => {
    frameServer()
    const store = await openedStore()
    const preview = new Uint8Array(SIZE * SIZE).map((_, i) => (i % SIZE < SIZE / 2 ? 1 : 0))
    store.replaceMask(preview, 'Preview segmentation')
    expect(store.upPixels).toBe((SIZE * SIZE) / 2)
    expect(store.undoLabel).toBe('Preview segmentation')
    store.undo()
    expect(store.upPixels).toBe(0)
  })
})
