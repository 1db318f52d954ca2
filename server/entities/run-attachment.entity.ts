import { Column, CreateDateColumn, Entity, JoinColumn, ManyToOne, PrimaryGeneratedColumn, type Relation } from 'typeorm'
import { Attachment } from './attachment.entity'

/** A photo or PDF attached to a step of a run (optionally to one field or one finding), with its thumbnail. */
@Entity({ name: 'run_attachment' })
export class RunAttachment {
  @PrimaryGeneratedColumn('uuid')
  id: string

  @Column({ type: 'uuid', name: 'run_id' })
  runId: string

  @Column({ type: 'uuid', name: 'attachment_id' })
  attachmentId: string

  @ManyToOne(() => Attachment, { onDelete: 'RESTRICT' })
  @JoinColumn({ name: 'attachment_id' })
  attachment: Relation<Attachment>

  @Column({ type: 'text', name: 'step_id' })
  stepId: string

  @Column({ type: 'text', name: 'field_id', nullable: true })
  fieldId: string | null

  @Column({ type: 'uuid', name: 'finding_id', nullable: true })
  findingId: string | null

  @Column({ type: 'text', name: 'thumbnail_key', nullable: true })
  thumbnailKey: string | null

  @CreateDateColumn({ type: 'timestamptz', name: 'created_at' })
  createdAt: Date
}
