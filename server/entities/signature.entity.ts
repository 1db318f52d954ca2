import { Column, CreateDateColumn, Entity, PrimaryGeneratedColumn } from 'typeorm'
import type { SignatureMeaning } from '@shared/types/report'

/** An electronic signature on a run (21 CFR Part 11 §11.50 as a model): who, role, meaning, when, and what was signed. */
@Entity({ name: 'signature' })
export class Signature {
  @PrimaryGeneratedColumn('uuid')
  id: string

  @Column({ type: 'uuid', name: 'run_id' })
  runId: string

  @Column({ type: 'text' })
  meaning: SignatureMeaning

  @Column({ type: 'uuid', name: 'signer_id' })
  signerId: string

  @Column({ type: 'text', name: 'printed_name' })
  printedName: string

  @Column({ type: 'text' })
  role: string

  @CreateDateColumn({ type: 'timestamptz', name: 'signed_at' })
  signedAt: Date

  @Column({ type: 'text', name: 'time_zone' })
  timeZone: string

  @Column({ type: 'text', name: 'image_data_url' })
  imageDataUrl: string

  @Column({ type: 'char', length: 64, name: 'snapshot_sha256' })
  snapshotSha256: string

  /** The exceptions the acceptor acknowledged (ids from shared/record/exceptions.ts), in the order listed; null for a performer. */
  @Column({ type: 'jsonb', name: 'acknowledged_exceptions', nullable: true })
  acknowledgedExceptions: string[] | null

  @Column({ type: 'boolean', default: false })
  voided: boolean

  @Column({ type: 'timestamptz', name: 'voided_at', nullable: true })
  voidedAt: Date | null

  @Column({ type: 'text', name: 'void_reason', nullable: true })
  voidReason: string | null
}
