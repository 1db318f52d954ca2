import { Column, Entity, PrimaryColumn } from 'typeorm'
import type { Disposition } from '@shared/record/disposition'
import type { FieldEvaluation } from '@shared/rules/evaluate'

/** The current value of one field of a run, with the server's verdict. Every change is also in the audit trail. */
@Entity({ name: 'reading' })
export class Reading {
  @PrimaryColumn({ type: 'uuid', name: 'run_id' })
  runId: string

  @PrimaryColumn({ type: 'text', name: 'field_id' })
  fieldId: string

  @Column({ type: 'jsonb', nullable: true })
  entry: Record<string, unknown> | null

  @Column({ type: 'double precision', name: 'canonical_value', nullable: true })
  canonicalValue: number | null

  @Column({ type: 'text' })
  verdict: string

  @Column({ type: 'jsonb' })
  evaluation: FieldEvaluation

  /** Why the field or step has no reading of its own (shared/record/disposition.ts); `notApplicable` is true whenever it is set. */
  @Column({ type: 'jsonb', nullable: true })
  disposition: Disposition | null

  @Column({ type: 'boolean', name: 'not_applicable', default: false })
  notApplicable: boolean

  @Column({ type: 'text', name: 'na_reason', nullable: true })
  naReason: string | null

  @Column({ type: 'text', nullable: true })
  justification: string | null

  @Column({ type: 'integer', default: 0 })
  version: number

  @Column({ type: 'uuid', name: 'updated_by', nullable: true })
  updatedBy: string | null

  @Column({ type: 'timestamptz', name: 'updated_at', nullable: true })
  updatedAt: Date | null
}
