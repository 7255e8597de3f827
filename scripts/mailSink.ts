/**
 * Local SMTP sink: accepts every message on 127.0.0.1 and keeps it as an .eml file (and in memory), so the dev-only
 * mailbox page and the tests can read what the app sent. The app sends only through nodemailer (server/mail).
 */
import { SMTPServer } from 'smtp-server'
import { simpleParser, type ParsedMail } from 'mailparser'
import { mkdirSync, writeFileSync } from 'node:fs'
import path from 'node:path'
import { fileURLToPath, pathToFileURL } from 'node:url'

export async function startMailSink(options: { port: number; directory: string }) {
  mkdirSync(options.directory, { recursive: true })
  const inbox: ParsedMail[] = []
  let counter = 0
  const server = new SMTPServer({
    authOptional: true,
    // smtp-server's bundled certificate has expired (STACK.md gotcha 11): plain SMTP on loopback only.
    disabledCommands: ['STARTTLS'],
    logger: false,
    onData(stream, _session, callback) {
      const chunks: Buffer[] = []
      stream.on('data', (c: Buffer) => chunks.push(c))
      stream.on('end', () => {
        const raw = Buffer.concat(chunks)
        const name = `${new Date().toISOString().replace(/[:.]/g, '-')}-${String(++counter).padStart(4, '0')}.eml`
        writeFileSync(path.join(options.directory, name), raw)
        simpleParser(raw).then((mail) => {
          inbox.push(mail)
          callback()
        }, callback)
      })
    },
  })
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject)
    server.listen(options.port, '127.0.0.1', () => resolve())
  })
  const address = server.server.address()
  const port = typeof address === 'object' && address ? address.port : options.port
  return {
    port,
    url: `smtp://127.0.0.1:${port}`,
    inbox,
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  }
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  const port = Number(process.env.MAIL_SINK_PORT ?? 2525)
  const directory = process.env.MAIL_SINK_DIR ?? fileURLToPath(new URL('../.data/mail', import.meta.url))
  const sink = await startMailSink({ port, directory })
  console.log(`[mail] SMTP sink on ${sink.url}, messages kept in ${directory}`)
  const stop = () => void sink.close().then(() => process.exit(0))
  process.on('SIGINT', stop)
  process.on('SIGTERM', stop)
}
