import { Column, CreateDateColumn, Entity, PrimaryGeneratedColumn, UpdateDateColumn } from 'typeorm'
import type { FindingSeverity, FindingStatus } from '@shared/types/run'

/** A deficiency found during a run, open until someone records how it was resolved. */
@Entity({ name: 'finding' })
export class Finding {
  @PrimaryGeneratedColumn('uuid')
  id: string

  @Column({ type: 'uuid', name: 'run_id' })
  runId: string

  @Column({ type: 'text', name: 'step_id' })
  stepId: string

  @Column({ type: 'text', name: 'field_id', nullable: true })
  fieldId: string | null

  @Column({ type: 'text' })
  severity: FindingSeverity

  @Column({ type: 'text' })
  description: string

  @Column({ type: 'text', default: 'open' })
  status: FindingStatus

  @Column({ type: 'text', nullable: true })
  resolution: string | null

  @Column({ type: 'uuid', name: 'resolved_by', nullable: true })
  resolvedBy: string | null

  @Column({ type: 'timestamptz', name: 'resolved_at', nullable: true })
  resolvedAt: Date | null

  /** Edit version: an edit names the version it was made on, and one made on an older version is refused (409). */
  @Column({ type: 'integer', default: 1 })
  version: number

  @Column({ type: 'uuid', name: 'created_by', nullable: true })
  createdBy: string | null

  @CreateDateColumn({ type: 'timestamptz', name: 'created_at' })
  createdAt: Date

  @UpdateDateColumn({ type: 'timestamptz', name: 'updated_at' })
  updatedAt: Date
}
