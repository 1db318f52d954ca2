import { Column, CreateDateColumn, Entity, OneToMany, PrimaryGeneratedColumn, UpdateDateColumn, type Relation } from 'typeorm'
import { TemplateVersion } from './template-version.entity'

/** A checklist in the firm's library; its content lives in numbered versions. */
@Entity({ name: 'checklist_template' })
export class ChecklistTemplate {
  @PrimaryGeneratedColumn('uuid')
  id: string

  @Column({ type: 'uuid', name: 'organization_id' })
  organizationId: string

  @Column({ type: 'text' })
  key: string

  @Column({ type: 'text' })
  name: string

  @Column({ type: 'text', name: 'equipment_kind' })
  equipmentKind: string

  @Column({ type: 'text', default: '' })
  description: string

  @OneToMany(() => TemplateVersion, (v) => v.template)
  versions: Relation<TemplateVersion[]>

  @CreateDateColumn({ type: 'timestamptz', name: 'created_at' })
  createdAt: Date

  @UpdateDateColumn({ type: 'timestamptz', name: 'updated_at' })
  updatedAt: Date
}
