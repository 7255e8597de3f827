// Entry of every analysis worker thread: registers tsx's loader in this thread (worker threads do not inherit the
// parent's --import hooks on Node 20), then loads the TypeScript worker. Plain JavaScript so Node can start it as is.
import { register } from 'tsx/esm/api'

register()
await import('./analysisWorker.ts')
