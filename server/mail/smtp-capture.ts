import { SMTPServer } from 'smtp-server'
import { simpleParser, type ParsedMail } from 'mailparser'
import type { AddressInfo } from 'node:net'

export interface CapturedMail {
  to: string[]
  from: string
  subject: string
  text: string
  attachments: { filename: string; contentType: string; size: number; content: Buffer }[]
  receivedAt: Date
}

/**
 * A local SMTP server on loopback that accepts every message and keeps it, for `npm start` and the tests.
 * Production points SMTP_URL at a real relay instead.
 */
export async function startSmtpCapture(port = 0): Promise<{ url: string; port: number; messages: CapturedMail[]; close(): Promise<void> }> {
  const messages: CapturedMail[] = []
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS', 'AUTH'],
    logger: false,
    banner: 'Startproof local mail capture',
    size: 30 * 1024 * 1024,
    onData(stream, _session, callback) {
      simpleParser(stream)
        .then((mail: ParsedMail) => {
          const to = (Array.isArray(mail.to) ? mail.to : mail.to ? [mail.to] : []).flatMap((a) => a.value.map((v) => v.address ?? ''))
          messages.push({
            to,
            from: mail.from?.text ?? '',
            subject: mail.subject ?? '',
            text: mail.text ?? '',
            attachments: mail.attachments.map((a) => ({ filename: a.filename ?? '', contentType: a.contentType, size: a.size, content: a.content })),
            receivedAt: new Date(),
          })
          callback()
        })
        .catch((err: Error) => callback(err))
    },
  })
  await new Promise<void>((resolve, reject) => {
    server.once('error', reject)
    server.listen(port, '127.0.0.1', () => resolve())
  })
  const actual = (server.server.address() as AddressInfo).port
  return {
    url: `smtp://127.0.0.1:${actual}`,
    port: actual,
    messages,
    close: () => new Promise<void>((resolve) => server.close(() => resolve())),
  }
}
