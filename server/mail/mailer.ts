/**
 * Outgoing e-mail through nodemailer only. SMTP_URL points at the local sink in development and tests
 * (scripts/mailSink.ts) and at a real relay in production.
 */
import nodemailer from 'nodemailer'

export interface Mailer {
  send(message: { to: string; subject: string; text: string; html?: string }): Promise<void>
  ping(): Promise<void>
  close(): void
}

export function createMailer(smtpUrl: string, from: string): Mailer {
  const url = new URL(smtpUrl)
  const local = url.hostname === '127.0.0.1' || url.hostname === 'localhost'
  // The local sink has no TLS (smtp-server's bundled certificate has expired, STACK.md gotcha 11).
  const transport = nodemailer.createTransport({
    host: url.hostname,
    port: Number(url.port || (url.protocol === 'smtps:' ? 465 : 587)),
    secure: url.protocol === 'smtps:',
    ignoreTLS: local,
    auth: url.username ? { user: decodeURIComponent(url.username), pass: decodeURIComponent(url.password) } : undefined,
    connectionTimeout: 5_000,
    greetingTimeout: 5_000,
    socketTimeout: 10_000,
  })
  return {
    async send(message) {
      await transport.sendMail({ from, ...message })
    },
    async ping() {
      await transport.verify()
    },
    close() {
      transport.close()
    },
  }
}
