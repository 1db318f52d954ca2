import { Column, CreateDateColumn, Entity, PrimaryColumn } from 'typeorm'

/** Every change a client sent, by its own id: a retry of an applied change is recognised and not applied twice. */
@Entity({ name: 'run_change' })
export class RunChange {
  @PrimaryColumn({ type: 'uuid' })
  id: string

  @Column({ type: 'uuid', name: 'run_id' })
  runId: string

  @Column({ type: 'text' })
  target: 'reading' | 'step'

  @Column({ type: 'text', name: 'target_id' })
  targetId: string

  @Column({ type: 'uuid', name: 'user_id', nullable: true })
  userId: string | null

  @CreateDateColumn({ type: 'timestamptz', name: 'applied_at' })
  appliedAt: Date
}
