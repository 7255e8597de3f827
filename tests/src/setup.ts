import { afterEach, vi } from 'vitest'
// Element Plus and chart components ask for a 2-D canvas context, which happy-dom does not provide.
import 'vitest-canvas-mock'

// The first test in a file that mounts or routes to a view transforms all of Element Plus (inlined for vitest,
// see vitest.config.ts), which takes several seconds on its own.
vi.setConfig({ testTimeout: 30_000 })

// Every client test starts from the real globals and an empty page: what one test stubbed (fakeApi's stubFetch,
// fakeXhr) or mounted (attachTo: document.body) does not leak into the next.
afterEach(() => {
  vi.unstubAllGlobals()
  document.body.innerHTML = ''
})
