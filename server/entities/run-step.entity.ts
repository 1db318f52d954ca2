import { Column, Entity, PrimaryColumn } from 'typeorm'
import type { Disposition } from '@shared/record/disposition'

/** A step's note and not-applicable state within a run. */
@Entity({ name: 'run_step' })
export class RunStep {
  @PrimaryColumn({ type: 'uuid', name: 'run_id' })
  runId: string

  @PrimaryColumn({ type: 'text', name: 'step_id' })
  stepId: string

  @Column({ type: 'text', default: '' })
  note: string

  /** Why the field or step has no reading of its own (shared/record/disposition.ts); `notApplicable` is true whenever it is set. */
  @Column({ type: 'jsonb', nullable: true })
  disposition: Disposition | null

  @Column({ type: 'boolean', name: 'not_applicable', default: false })
  notApplicable: boolean

  @Column({ type: 'text', name: 'na_reason', nullable: true })
  naReason: string | null

  @Column({ type: 'integer', default: 0 })
  version: number

  @Column({ type: 'uuid', name: 'updated_by', nullable: true })
  updatedBy: string | null

  @Column({ type: 'timestamptz', name: 'updated_at', nullable: true })
  updatedAt: Date | null
}
