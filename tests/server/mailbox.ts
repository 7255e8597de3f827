/**
 * Reading what the app sent through the real SMTP sink (tests/server/globalSetup.ts): the sink writes every message
 * as an .eml file into inject('mailSinkDir'); server/routes/dev.ts readMailbox() parses them.
 */
import { inject } from 'vitest'
import { readMailbox } from '../../server/routes/dev'

export type SentMail = Awaited<ReturnType<typeof readMailbox>>[number]

/** Every message to `to` received so far, newest first. */
export async function mailsTo(to: string): Promise<SentMail[]> {
  return (await readMailbox(inject('mailSinkDir'), 5000)).filter((m) => m.to.toLowerCase().includes(to.toLowerCase()))
}

/** Wait until a message to `to` whose subject matches arrives (delivery is asynchronous); returns the newest. */
export async function waitForMail(to: string, subject: RegExp, timeoutMs = 15_000): Promise<SentMail> {
  const deadline = Date.now() + timeoutMs
  for (;;) {
    const found = (await mailsTo(to)).find((m) => subject.test(m.subject))
    if (found) return found
    if (Date.now() > deadline) throw new Error(`no e-mail to ${to} with subject ${subject} within ${timeoutMs} ms`)
    await new Promise((r) => setTimeout(r, 100))
  }
}

/** The token of the first link in a message whose path is `path` (e.g. '/accept-invitation'). */
export function linkToken(mail: SentMail, path: string): string {
  const match = new RegExp(`${path.replace(/[/-]/g, '\\$&')}\\?token=([\\w%-]+)`).exec(mail.text)
  if (!match) throw new Error(`no ${path} link in: ${mail.text}`)
  return decodeURIComponent(match[1])
}
