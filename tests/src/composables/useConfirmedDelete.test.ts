import { beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises } from '@vue/test-utils'
import { createPinia, setActivePinia } from 'pinia'
import type { DeletionReceiptDto } from '@shared/types/deletion'
import { useConfirmedDelete } from '@/composables/useConfirmedDelete'
import { errorResponse, jsonResponse, stubFetch } from '../fakeApi'

const RECEIPT: DeletionReceiptDto = { kind: 'image', id: 9, name: 'film.tif', deletedAt: '2026-03-02T10:00:00.000Z', purgeAfter: '2026-04-01T10:00:00.000Z', imageCount: 1 }
const APPROVED_MESSAGE = '"film.tif" has 2 approved analyses. Confirm to delete it with them; a PI or lab administrator can restore it for 30 days.'

/** Element Plus puts each confirm box at the end of the body; answer the one whose text contains `text`. */
async function answerBox(text: string, buttonText: string): Promise<void> {
  let box: Element | undefined
  await vi.waitFor(() => {
    box = [...document.querySelectorAll('.el-message-box')].find((b) => b.textContent?.includes(text))
    expect(box).toBeDefined()
  })
  const button = [...box!.querySelectorAll<HTMLButtonElement>('button')].find((b) => b.textContent?.trim() === buttonText)
  if (!button) throw new Error(`No "${buttonText}" in the box saying "${text}"`)
  button.click()
  await flushPromises()
}

beforeEach(() => setActivePinia(createPinia()))

describe('useConfirmedDelete', () => {
  it('When the image has approved analyses, then a second question with the server\u2019s message comes before the delete is sent with confirmApproved=true', async () => {
    let deletes = 0
    const requests = stubFetch({
      'GET /api/deletion-policy': () => jsonResponse(200, { retentionDays: 30 }),
      'DELETE /api/images/9': () => (++deletes === 1 ? errorResponse(409, 'confirmation-needed', APPROVED_MESSAGE) : jsonResponse(200, RECEIPT)),
    })
    const result = useConfirmedDelete().run({ kind: 'image', id: 9, name: 'film.tif' })

    await answerBox('can restore it for 30 days', 'Delete')
    await answerBox('2 approved analyses', 'Delete with approved analyses')

    expect(await result).toEqual(RECEIPT)
    expect(requests.filter((r) => r.method === 'DELETE').map((r) => r.url)).toEqual(['/api/images/9', '/api/images/9?confirmApproved=true'])
  })

  it('When the first question is cancelled, then nothing is sent', async () => {
    const requests = stubFetch({ 'GET /api/deletion-policy': () => jsonResponse(200, { retentionDays: 7 }) })
    const result = useConfirmedDelete().run({ kind: 'project', id: 3, name: 'Anneal series' })

    await answerBox('with all its images moves to Deleted items', 'Cancel')

    expect(await result).toBeNull()
    expect(requests.some((r) => r.method === 'DELETE')).toBe(false)
  })
})
