import { Column, CreateDateColumn, Entity, PrimaryGeneratedColumn } from 'typeorm'

/**
 * A run as its performer signed it: the exact canonical JSON (RFC 8785) whose SHA-256 the signatures carry. Kept for
 * ever (a trigger refuses UPDATE and DELETE); a voided signature's snapshot stays too.
 */
@Entity({ name: 'run_snapshot' })
export class RunSnapshotRow {
  @PrimaryGeneratedColumn('uuid')
  id: string

  @Column({ type: 'uuid', name: 'run_id' })
  runId: string

  @Column({ type: 'char', length: 64 })
  sha256: string

  /** The canonical JSON, byte for byte as hashed. */
  @Column({ type: 'text' })
  content: string

  @Column({ type: 'uuid', name: 'created_by', nullable: true })
  createdBy: string | null

  @CreateDateColumn({ type: 'timestamptz', name: 'created_at' })
  createdAt: Date
}
