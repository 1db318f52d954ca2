import { Column, CreateDateColumn, Entity, JoinColumn, ManyToOne, PrimaryGeneratedColumn, UpdateDateColumn, type Relation } from 'typeorm'
import type { TemplateVersionStatus } from '@shared/types/api'
import { ChecklistTemplate } from './checklist-template.entity'

/** One version of a template. Published versions are frozen: the service refuses changes and a trigger does too. */
@Entity({ name: 'template_version' })
export class TemplateVersion {
  @PrimaryGeneratedColumn('uuid')
  id: string

  @Column({ type: 'uuid', name: 'template_id' })
  templateId: string

  @ManyToOne(() => ChecklistTemplate, (t) => t.versions, { onDelete: 'RESTRICT' })
  @JoinColumn({ name: 'template_id' })
  template: Relation<ChecklistTemplate>

  @Column({ type: 'integer' })
  number: number

  @Column({ type: 'text' })
  status: TemplateVersionStatus

  @Column({ type: 'jsonb' })
  definition: Record<string, unknown>

  @Column({ type: 'text', nullable: true })
  changelog: string | null

  /** Edit version: an edit names the version it was made on, and one made on an older version is refused (409). */
  @Column({ type: 'integer', default: 1 })
  version: number

  /** The starter library revision this version was published from; null for a version the firm wrote. */
  @Column({ type: 'integer', name: 'starter_revision', nullable: true })
  starterRevision: number | null

  @Column({ type: 'uuid', name: 'created_by', nullable: true })
  createdBy: string | null

  @CreateDateColumn({ type: 'timestamptz', name: 'created_at' })
  createdAt: Date

  @UpdateDateColumn({ type: 'timestamptz', name: 'updated_at' })
  updatedAt: Date

  @Column({ type: 'uuid', name: 'published_by', nullable: true })
  publishedBy: string | null

  @Column({ type: 'timestamptz', name: 'published_at', nullable: true })
  publishedAt: Date | null

  @Column({ type: 'uuid', name: 'retired_by', nullable: true })
  retiredBy: string | null

  @Column({ type: 'timestamptz', name: 'retired_at', nullable: true })
  retiredAt: Date | null
}
