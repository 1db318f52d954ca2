import { Column, CreateDateColumn, Entity, JoinColumn, ManyToOne, PrimaryGeneratedColumn, type Relation } from 'typeorm'
import type { CloseoutCategory } from '@shared/types/archive'
import { Attachment } from './attachment.entity'
import { User } from './user.entity'

/** A handover file attached to a project (O&M manual, warranty letter, test certificate…). Kept for good (trigger). */
@Entity({ name: 'closeout_document' })
export class CloseoutDocument {
  @PrimaryGeneratedColumn('uuid')
  id: string

  @Column({ type: 'uuid', name: 'project_id' })
  projectId: string

  @Column({ type: 'uuid', name: 'attachment_id' })
  attachmentId: string

  @ManyToOne(() => Attachment, { onDelete: 'RESTRICT' })
  @JoinColumn({ name: 'attachment_id' })
  attachment: Relation<Attachment>

  @Column({ type: 'text' })
  title: string

  @Column({ type: 'text' })
  category: CloseoutCategory

  /** The date of the document itself, YYYY-MM-DD. */
  @Column({ type: 'date', name: 'document_date' })
  documentDate: string

  @Column({ type: 'uuid', name: 'uploaded_by' })
  uploadedById: string

  @ManyToOne(() => User, { onDelete: 'RESTRICT' })
  @JoinColumn({ name: 'uploaded_by' })
  uploadedBy: Relation<User>

  @CreateDateColumn({ type: 'timestamptz', name: 'uploaded_at' })
  uploadedAt: Date
}
