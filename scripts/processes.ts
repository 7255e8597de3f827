/** Child-process helpers for the start and test scripts: spawn with prefixed output, wait for a port, run to completion. */
import { spawn, type ChildProcess } from 'node:child_process'
import net from 'node:net'

/**
 * V8 flags of the web server process. A young generation of 2 MB semi-spaces instead of V8's default of up to 16 MB:
 * during a 200 MB upload the request thread and the analysis thread fill it with short-lived stream and frame objects,
 * and the larger default left the server 25–40 MiB bigger for the same work (npm run bench:upload: growth 86–114 MiB
 * without the flag, 62–77 MiB with it, and the upload no slower). Worker threads of the process inherit it.
 */
export const WEB_SERVER_NODE_FLAGS = ['--max-semi-space-size=2']

/**
 * Environment of the processes that run analysis threads (the web server renders uploaded frames in one, the job
 * worker analyses stacks in a pool). glibc gives each thread malloc arenas of its own, up to eight per core, and the
 * frame-sized buffers one thread frees stay in its arena, unused by the others, so the resident size creeps up. Two
 * arenas for the whole process keep it down at no cost in time we could measure (npm run bench, stack: peak RSS
 * 346–362 → 326–341 MB, same wall time; npm run bench:upload growth 71 → 39–65 MiB). glibc reads it when the process
 * starts, so it goes into the child's environment; a MALLOC_ARENA_MAX already set wins.
 */
export const ANALYSIS_PROCESS_ENV = { MALLOC_ARENA_MAX: process.env.MALLOC_ARENA_MAX ?? '2' }

export function spawnService(name: string, command: string, args: string[], env: NodeJS.ProcessEnv = process.env): ChildProcess {
  const child = spawn(command, args, { env, stdio: ['ignore', 'pipe', 'pipe'] })
  const prefix = (chunk: Buffer) => chunk.toString().replace(/\n(?!$)/g, `\n[${name}] `)
  child.stdout!.on('data', (c: Buffer) => process.stdout.write(`[${name}] ${prefix(c)}`))
  child.stderr!.on('data', (c: Buffer) => process.stderr.write(`[${name}] ${prefix(c)}`))
  return child
}

export function run(command: string, args: string[], env: NodeJS.ProcessEnv = process.env): Promise<void> {
  return new Promise((resolve, reject) => {
    const child = spawn(command, args, { env, stdio: 'inherit' })
    child.on('exit', (code) => (code === 0 ? resolve() : reject(new Error(`${command} ${args.join(' ')} exited with ${code}`))))
    child.on('error', reject)
  })
}

export function portIsOpen(port: number, host = '127.0.0.1'): Promise<boolean> {
  return new Promise((resolve) => {
    const socket = net.connect({ port, host })
    socket.once('connect', () => {
      socket.destroy()
      resolve(true)
    })
    socket.once('error', () => resolve(false))
  })
}

/** A loopback port nothing listens on right now (the OS picks it), for a server a script or test starts itself. */
export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const probe = net.createServer()
    probe.once('error', reject)
    probe.listen(0, '127.0.0.1', () => {
      const { port } = probe.address() as net.AddressInfo
      probe.close(() => resolve(port))
    })
  })
}

export async function waitForPort(port: number, what: string, timeoutMs = 30_000): Promise<void> {
  const deadline = Date.now() + timeoutMs
  while (Date.now() < deadline) {
    if (await portIsOpen(port)) return
    await new Promise((r) => setTimeout(r, 200))
  }
  throw new Error(`${what} did not open port ${port} within ${timeoutMs / 1000} s`)
}
