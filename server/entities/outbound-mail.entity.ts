import { Column, CreateDateColumn, Entity, PrimaryGeneratedColumn } from 'typeorm'

export type MailStatus = 'queued' | 'sent' | 'failed'

/** A message the product sends, kept with its delivery state; sending is retried and never blocks the work that caused it. */
@Entity({ name: 'outbound_mail' })
export class OutboundMail {
  @PrimaryGeneratedColumn('uuid')
  id: string

  @Column({ type: 'text' })
  kind: string

  @Column({ type: 'uuid', name: 'run_id', nullable: true })
  runId: string | null

  @Column({ type: 'text', array: true, name: 'to_addresses' })
  to: string[]

  @Column({ type: 'text' })
  subject: string

  @Column({ type: 'text', name: 'body_text' })
  text: string

  /** Files to attach, read from storage when sending: `{ filename, storageKey, sha256, contentType }`. */
  @Column({ type: 'jsonb', default: () => "'[]'" })
  attachments: { filename: string; storageKey: string; sha256: string; contentType: string }[]

  @Column({ type: 'text', default: 'queued' })
  status: MailStatus

  @Column({ type: 'integer', default: 0 })
  attempts: number

  @Column({ type: 'text', name: 'last_error', nullable: true })
  lastError: string | null

  @Column({ type: 'timestamptz', name: 'next_attempt_at', default: () => 'now()' })
  nextAttemptAt: Date

  @Column({ type: 'timestamptz', name: 'sent_at', nullable: true })
  sentAt: Date | null

  @Column({ type: 'text', name: 'message_id', nullable: true })
  messageId: string | null

  @CreateDateColumn({ type: 'timestamptz', name: 'created_at' })
  createdAt: Date
}
