import { Column, CreateDateColumn, Entity, PrimaryGeneratedColumn } from 'typeorm'

/** A stored file (photo, PDF): bytes live in the storage service under `storageKey`, identified by their SHA-256. */
@Entity({ name: 'attachment' })
export class Attachment {
  @PrimaryGeneratedColumn('uuid')
  id: string

  @Column({ type: 'uuid', name: 'organization_id' })
  organizationId: string

  /** Content-addressed, so identical files uploaded twice share one stored object. */
  @Column({ type: 'text', name: 'storage_key' })
  storageKey: string

  @Column({ type: 'char', length: 64 })
  sha256: string

  @Column({ type: 'text', name: 'mime_type' })
  mimeType: string

  @Column({ type: 'bigint', name: 'size_bytes', transformer: { to: (v: number) => v, from: (v: string) => Number(v) } })
  sizeBytes: number

  @Column({ type: 'text', name: 'original_name' })
  originalName: string

  @Column({ type: 'uuid', name: 'uploaded_by', nullable: true })
  uploadedBy: string | null

  @CreateDateColumn({ type: 'timestamptz', name: 'created_at' })
  createdAt: Date
}
