import { Column, CreateDateColumn, Entity, PrimaryGeneratedColumn } from 'typeorm'

/** Append-only trail of who changed what (the database refuses UPDATE and DELETE on it). */
@Entity({ name: 'audit_event' })
export class AuditEvent {
  @PrimaryGeneratedColumn('identity', { type: 'bigint' })
  id: string

  @CreateDateColumn({ type: 'timestamptz', name: 'occurred_at' })
  occurredAt: Date

  @Column({ type: 'uuid', name: 'actor_id', nullable: true })
  actorId: string | null

  @Column({ type: 'text' })
  action: string

  @Column({ type: 'text', name: 'entity_type' })
  entityType: string

  @Column({ type: 'text', name: 'entity_id', nullable: true })
  entityId: string | null

  @Column({ type: 'uuid', name: 'project_id', nullable: true })
  projectId: string | null

  @Column({ type: 'jsonb', nullable: true })
  before: Record<string, unknown> | null

  @Column({ type: 'jsonb', nullable: true })
  after: Record<string, unknown> | null

  @Column({ type: 'inet', nullable: true })
  ip: string | null
}
