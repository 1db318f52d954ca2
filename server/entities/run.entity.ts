import { Column, CreateDateColumn, Entity, PrimaryGeneratedColumn, UpdateDateColumn, VersionColumn } from 'typeorm'
import type { RunState } from '@shared/types/run'

/** One start-up of one equipment item against one pinned template version. */
@Entity({ name: 'run' })
export class Run {
  @PrimaryGeneratedColumn('uuid')
  id: string

  @Column({ type: 'uuid', name: 'project_id' })
  projectId: string

  @Column({ type: 'uuid', name: 'equipment_id' })
  equipmentId: string

  @Column({ type: 'uuid', name: 'template_version_id' })
  templateVersionId: string

  @Column({ type: 'text' })
  state: RunState

  @VersionColumn({ type: 'integer' })
  version: number

  /** Counts every change to what a save judges by (readings, steps, verdicts, state): a save's optimistic check. */
  @Column({ type: 'integer', default: 0 })
  revision: number

  @Column({ type: 'uuid', name: 'started_by', nullable: true })
  startedBy: string | null

  @CreateDateColumn({ type: 'timestamptz', name: 'started_at' })
  startedAt: Date

  @UpdateDateColumn({ type: 'timestamptz', name: 'updated_at' })
  updatedAt: Date
}
