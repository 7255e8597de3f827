/**
 * Development only (registered when MAIL_SINK_DIR is set and NODE_ENV is not production): the messages the local
 * SMTP sink received, newest first, so invitations and resets can be followed without a real mailbox.
 */
import { z } from 'zod'
import { readdir, readFile } from 'node:fs/promises'
import path from 'node:path'
import { simpleParser } from 'mailparser'
import { apiRoute, type ApiDefinition } from '../openapi/apiRoute'

const MessageSchema = z.object({ id: z.string(), to: z.string(), subject: z.string(), date: z.string(), text: z.string() })

export async function readMailbox(dir: string, limit = 50) {
  const names = (await readdir(dir).catch(() => [] as string[])).filter((n) => n.endsWith('.eml')).sort().reverse().slice(0, limit)
  return Promise.all(
    names.map(async (name) => {
      const mail = await simpleParser(await readFile(path.join(dir, name)))
      const to = Array.isArray(mail.to) ? mail.to.map((a) => a.text).join(', ') : (mail.to?.text ?? '')
      return { id: name, to, subject: mail.subject ?? '', date: (mail.date ?? new Date(0)).toISOString(), text: mail.text ?? '' }
    }),
  )
}

export function registerDevRoutes(api: ApiDefinition, mailSinkDir: string): void {
  apiRoute(api, {
    method: 'get',
    path: '/dev/mailbox',
    summary: 'Development only: messages received by the local SMTP sink',
    tags: ['dev'],
    access: 'signed-in',
    responses: { 200: { description: 'Messages, newest first', schema: z.array(MessageSchema) } },
    handler: () => readMailbox(mailSinkDir),
  })
}
