import { describe, expect, it } from 'vitest'
import { mount } from '@vue/test-utils'
import ElementPlus from 'element-plus'
import { ApiError } from '@/api/http'
import LoadErrorAlert from '@/components/LoadErrorAlert.vue'

function mountAlert(error: ApiError | null) {
  return mount(LoadErrorAlert, { props: { what: 'the wall motion', error }, global: { plugins: [ElementPlus] } })
}
const hasRetry = (wrapper: ReturnType<typeof mountAlert>) => wrapper.findAll('button').some((b) => b.text().trim() === 'Retry')

describe('LoadErrorAlert', () => {
  it.each([
    { status: 0, why: 'no answer (network down)', retry: true },
    { status: 503, why: 'a part of the server is down', retry: true },
    { status: 500, why: 'a server failure', retry: true },
    { status: 429, why: 'a rate limit', retry: true },
    { status: 408, why: 'a timeout', retry: true },
    { status: 400, why: 'a refusal of this very request', retry: false },
    { status: 404, why: 'a missing item', retry: false },
    { status: 422, why: 'a request the server cannot process', retry: false },
  ])('When loading failed with $status ($why), then Retry is offered: $retry', ({ status, retry }) => {
    const wrapper = mountAlert(new ApiError(status, 'some-code', 'What the server said.'))
    expect(wrapper.text()).toContain('Could not load the wall motion')
    expect(wrapper.text()).toContain('What the server said.')
    expect(hasRetry(wrapper)).toBe(retry)
  })

  it('When Retry is pressed, then the page is asked to load again', async () => {
    const wrapper = mountAlert(new ApiError(503, 'database-unavailable', 'The database is not answering.'))
    await wrapper.findAll('button').find((b) => b.text().trim() === 'Retry')!.trigger('click')
    expect(wrapper.emitted('retry')).toHaveLength(1)
  })
})
