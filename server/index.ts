/** Starts the web server: the only file that calls listen(). */
import { loadConfig } from './config'
import { createApp } from './app'
import { createDeps } from './runtime'

const config = loadConfig()
const deps = createDeps(config)
const { app, close } = createApp(deps)

const server = app.listen(config.port, config.host, () => {
  console.log(`Remanence is serving on http://${config.host}:${config.port}`)
})

/** Requests still running when the server is told to stop get this long to finish before the database closes. */
const DRAIN_MS = 5_000

async function shutdown(signal: string) {
  console.log(`${signal}: closing the web server`)
  // Stop accepting, let running requests finish (idle keep-alive connections are closed now), then release the rest.
  const drained = new Promise((resolve) => server.close(resolve))
  server.closeIdleConnections()
  await Promise.race([drained, new Promise((resolve) => setTimeout(resolve, DRAIN_MS).unref())])
  await close().catch(() => {})
  await deps.dispose().catch(() => {})
  process.exit(0)
}
process.on('SIGINT', () => void shutdown('SIGINT'))
process.on('SIGTERM', () => void shutdown('SIGTERM'))
