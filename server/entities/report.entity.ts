import { Column, CreateDateColumn, Entity, PrimaryGeneratedColumn } from 'typeorm'
import type { CheckIndex, RunSupersedes } from '@shared/record'

export type ReportStatus = 'pending' | 'ready' | 'failed'

/** The sealed PDF handover report of an accepted run, archived in storage by its SHA-256. */
@Entity({ name: 'report' })
export class Report {
  @PrimaryGeneratedColumn('uuid')
  id: string

  @Column({ type: 'uuid', name: 'run_id' })
  runId: string

  @Column({ type: 'text', name: 'report_number' })
  reportNumber: string

  @Column({ type: 'text' })
  status: ReportStatus

  @Column({ type: 'text' })
  paper: 'A4' | 'Letter'

  @Column({ type: 'integer', default: 0 })
  attempts: number

  @Column({ type: 'text', name: 'last_error', nullable: true })
  lastError: string | null

  @Column({ type: 'text', name: 'storage_key', nullable: true })
  storageKey: string | null

  /** SHA-256 of the sealed PDF file as archived. */
  @Column({ type: 'char', length: 64, nullable: true })
  sha256: string | null

  /** SHA-256 of the report content (canonical JSON of what it prints), printed in the report's verification block. */
  @Column({ type: 'char', length: 64, name: 'content_sha256', nullable: true })
  contentSha256: string | null

  @Column({ type: 'bigint', name: 'size_bytes', nullable: true, transformer: { to: (v: number | null) => v, from: (v: string | null) => (v === null ? null : Number(v)) } })
  sizeBytes: number | null

  @Column({ type: 'jsonb', name: 'seal_info', nullable: true })
  sealInfo: Record<string, unknown> | null

  /** SHA-256 of the signed run snapshot the report is issued from (the hash both signatures carry). */
  @Column({ type: 'char', length: 64, name: 'snapshot_sha256', nullable: true })
  snapshotSha256: string | null

  // The identity the report printed, copied from the signed snapshot at acceptance: later renames change nothing issued.
  @Column({ type: 'text', name: 'equipment_tag', nullable: true })
  equipmentTag: string | null

  @Column({ type: 'text', name: 'equipment_kind', nullable: true })
  equipmentKind: string | null

  @Column({ type: 'text', name: 'serial_number', nullable: true })
  serialNumber: string | null

  @Column({ type: 'text', name: 'project_code', nullable: true })
  projectCode: string | null

  @Column({ type: 'text', name: 'project_name', nullable: true })
  projectName: string | null

  @Column({ type: 'text', name: 'time_zone', nullable: true })
  timeZone: string | null

  @Column({ type: 'text', name: 'template_name', nullable: true })
  templateName: string | null

  @Column({ type: 'integer', name: 'template_version', nullable: true })
  templateVersion: number | null

  /** Which checks the run performed and which it carried over from where (from the signed snapshot, at acceptance). */
  @Column({ type: 'jsonb', name: 'check_index', nullable: true })
  checkIndex: CheckIndex | null

  /** What the run superseded among the earlier reports of its lineage when it was accepted, with the cover's words. */
  @Column({ type: 'jsonb', nullable: true })
  supersedes: (RunSupersedes & { words: string | null }) | null

  /** Which render holds the report now, and until when (a lease: a crashed worker's claim runs out). */
  @Column({ type: 'uuid', name: 'claim_token', nullable: true })
  claimToken: string | null

  @Column({ type: 'timestamptz', name: 'claimed_until', nullable: true })
  claimedUntil: Date | null

  @CreateDateColumn({ type: 'timestamptz', name: 'created_at' })
  createdAt: Date

  @Column({ type: 'timestamptz', name: 'ready_at', nullable: true })
  readyAt: Date | null
}
