import { Column, CreateDateColumn, Entity, PrimaryColumn } from 'typeorm'

/**
 * Every change a client sent, by its own id within its target (run, reading or step, field or step id): a retry of an
 * applied change is recognised and not applied twice, and the same id on another target is another change.
 */
@Entity({ name: 'run_change' })
export class RunChange {
  @PrimaryColumn({ type: 'uuid' })
  id: string

  @PrimaryColumn({ type: 'uuid', name: 'run_id' })
  runId: string

  @PrimaryColumn({ type: 'text' })
  target: 'reading' | 'step'

  @PrimaryColumn({ type: 'text', name: 'target_id' })
  targetId: string

  @Column({ type: 'uuid', name: 'user_id', nullable: true })
  userId: string | null

  @CreateDateColumn({ type: 'timestamptz', name: 'applied_at' })
  appliedAt: Date
}
