import fs from 'node:fs'
import path from 'node:path'
import Handlebars from 'handlebars'
import nodemailer, { type Transporter } from 'nodemailer'
import type { DataSource, EntityManager } from 'typeorm'
import { OutboundMail } from '../entities'
import type { StorageService } from '../storage/storage'

const MAX_ATTEMPTS = 8
const templatesDir = path.resolve(import.meta.dirname, '../../templates/mail')
const compiled = new Map<string, Handlebars.TemplateDelegate>()

/** Renders `templates/mail/<name>.hbs` (plain text; Handlebars escaping is off only because the output is not HTML). */
export function renderMailText(name: string, data: Record<string, unknown>): string {
  let template = compiled.get(name)
  if (!template) {
    template = Handlebars.compile(fs.readFileSync(path.join(templatesDir, `${name}.hbs`), 'utf8'), { noEscape: true, strict: true })
    compiled.set(name, template)
  }
  return template(data)
}

export interface QueuedMail {
  kind: string
  runId?: string | null
  to: string[]
  subject: string
  text: string
  attachments?: OutboundMail['attachments']
}

/**
 * Outgoing mail: queued in PostgreSQL inside the transaction that causes it, sent by a worker with retries and backoff,
 * so a mail server that is down never blocks signing. Without SMTP_URL messages stay queued (visible in the Outbox).
 */
export class MailService {
  private transport: Transporter | null
  private timer: NodeJS.Timeout | null = null
  private draining: Promise<number> | null = null

  constructor(
    private readonly db: DataSource,
    private readonly storage: StorageService,
    private readonly options: { smtpUrl?: string; from: string },
  ) {
    this.transport = options.smtpUrl ? nodemailer.createTransport(transportOptions(options.smtpUrl)) : null
  }

  async queue(manager: EntityManager, mail: QueuedMail): Promise<void> {
    const to = [...new Set(mail.to.map((a) => a.trim().toLowerCase()).filter(Boolean))]
    if (!to.length) return
    await manager.getRepository(OutboundMail).insert({
      kind: mail.kind,
      runId: mail.runId ?? null,
      to,
      subject: mail.subject,
      text: mail.text,
      attachments: mail.attachments ?? [],
    })
  }

  /** Sends every message that is due; returns how many were sent. Safe to call from several processes at once. */
  drain(): Promise<number> {
    this.draining ??= this.sendDue().finally(() => {
      this.draining = null
    })
    return this.draining
  }

  private async sendDue(): Promise<number> {
    if (!this.transport) return 0
    let sent = 0
    for (;;) {
      // Claim due messages for a minute, so another worker does not pick them up while this one sends.
      const claimed: { id: string }[] = await this.db.query(
        `WITH claimed AS (
           UPDATE outbound_mail SET next_attempt_at = now() + interval '1 minute'
            WHERE id IN (SELECT id FROM outbound_mail WHERE status = 'queued' AND next_attempt_at <= now()
                          ORDER BY created_at LIMIT 5 FOR UPDATE SKIP LOCKED)
            RETURNING id)
         SELECT id FROM claimed`,
      )
      const batch = claimed
      if (!batch.length) return sent
      for (const { id } of batch) {
        const mail = await this.db.getRepository(OutboundMail).findOneByOrFail({ id })
        try {
          const attachments = await Promise.all(
            mail.attachments.map(async (a) => ({ filename: a.filename, contentType: a.contentType, content: await this.storage.read(a.storageKey, a.sha256) })),
          )
          const info = await this.transport.sendMail({ from: this.options.from, to: mail.to, subject: mail.subject, text: mail.text, attachments })
          await this.db.getRepository(OutboundMail).update(id, { status: 'sent', sentAt: new Date(), attempts: mail.attempts + 1, lastError: null, messageId: info.messageId ?? null })
          sent += 1
        } catch (err) {
          const attempts = mail.attempts + 1
          const delaySeconds = Math.min(3600, 15 * 2 ** (attempts - 1))
          await this.db.query(
            `UPDATE outbound_mail SET attempts = $2, last_error = $3, status = $4, next_attempt_at = now() + $5 * interval '1 second' WHERE id = $1`,
            [id, attempts, (err as Error).message.slice(0, 500), attempts >= MAX_ATTEMPTS ? 'failed' : 'queued', delaySeconds],
          )
        }
      }
    }
  }

  /** Checks the queue every `intervalMs` until stopped. */
  startWorker(intervalMs = 3000): void {
    if (this.timer || !this.transport) return
    this.timer = setInterval(() => void this.drain().catch((err) => console.error('mail worker:', (err as Error).message)), intervalMs)
    this.timer.unref()
  }

  async stop(): Promise<void> {
    if (this.timer) clearInterval(this.timer)
    this.timer = null
    await this.draining?.catch(() => undefined)
    this.transport?.close()
  }
}

function transportOptions(smtpUrl: string) {
  const url = new URL(smtpUrl)
  const loopback = ['127.0.0.1', 'localhost', '::1', '[::1]'].includes(url.hostname)
  return {
    host: url.hostname,
    port: Number(url.port || (url.protocol === 'smtps:' ? 465 : 587)),
    secure: url.protocol === 'smtps:',
    ...(url.username ? { auth: { user: decodeURIComponent(url.username), pass: decodeURIComponent(url.password) } } : {}),
    // The local capture server on loopback speaks plain SMTP; anything else must offer TLS.
    ...(loopback ? { ignoreTLS: true } : { requireTLS: url.protocol !== 'smtps:' }),
    connectionTimeout: 10_000,
    greetingTimeout: 10_000,
    socketTimeout: 20_000,
  }
}
