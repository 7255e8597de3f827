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

async function shutdown(signal: string) {
  console.log(`${signal}: closing the web server`)
  server.close()
  await close().catch(() => {})
  await deps.dispose().catch(() => {})
  process.exit(0)
}
process.on('SIGINT', () => void shutdown('SIGINT'))
process.on('SIGTERM', () => void shutdown('SIGTERM'))
