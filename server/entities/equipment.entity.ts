import { Column, CreateDateColumn, Entity, JoinColumn, ManyToOne, PrimaryGeneratedColumn, UpdateDateColumn, type Relation } from 'typeorm'
import { Attachment } from './attachment.entity'
import { Project } from './project.entity'

/** A machine on a project (chiller `CH-2`, pump `CHWP-1`), with its nameplate and design point. */
@Entity({ name: 'equipment' })
export class Equipment {
  @PrimaryGeneratedColumn('uuid')
  id: string

  @Column({ type: 'uuid', name: 'project_id' })
  projectId: string

  @ManyToOne(() => Project, { onDelete: 'RESTRICT' })
  @JoinColumn({ name: 'project_id' })
  project: Relation<Project>

  @Column({ type: 'text' })
  tag: string

  @Column({ type: 'text' })
  kind: string

  @Column({ type: 'text', default: '' })
  location: string

  @Column({ type: 'text' })
  manufacturer: string

  @Column({ type: 'text' })
  model: string

  @Column({ type: 'text', name: 'serial_number' })
  serialNumber: string

  @Column({ type: 'integer', name: 'year_built', nullable: true })
  yearBuilt: number | null

  /** Copied from the design point for chillers so it can be searched and printed; null for pumps. */
  @Column({ type: 'text', nullable: true })
  refrigerant: string | null

  /** Design point in canonical SI units: `{ key: { value, unit } }` plus non-numeric entries (refrigerant …). */
  @Column({ type: 'jsonb', name: 'design_point' })
  designPoint: Record<string, unknown>

  @Column({ type: 'text', default: '' })
  notes: string

  @Column({ type: 'uuid', name: 'nameplate_photo_id', nullable: true })
  nameplatePhotoId: string | null

  @ManyToOne(() => Attachment, { onDelete: 'RESTRICT', nullable: true })
  @JoinColumn({ name: 'nameplate_photo_id' })
  nameplatePhoto: Relation<Attachment> | null

  /** Edit version: an edit names the version it was made on, and one made on an older version is refused (409). */
  @Column({ type: 'integer', default: 1 })
  version: number

  @CreateDateColumn({ type: 'timestamptz', name: 'created_at' })
  createdAt: Date

  @UpdateDateColumn({ type: 'timestamptz', name: 'updated_at' })
  updatedAt: Date
}
