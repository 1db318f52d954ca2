import { Column, CreateDateColumn, Entity, JoinColumn, ManyToOne, OneToMany, PrimaryGeneratedColumn, UpdateDateColumn, type Relation } from 'typeorm'
import type { Role } from '@shared/types/roles'
import { Organization } from './organization.entity'
import { ProjectMember } from './project-member.entity'

@Entity({ name: 'app_user' })
export class User {
  @PrimaryGeneratedColumn('uuid')
  id: string

  @Column({ type: 'uuid', name: 'organization_id' })
  organizationId: string

  @ManyToOne(() => Organization, { onDelete: 'RESTRICT' })
  @JoinColumn({ name: 'organization_id' })
  organization: Relation<Organization>

  /** Stored lower-case; unique per installation (citext would do too, but lower() keeps the index plain). */
  @Column({ type: 'text', unique: true })
  email: string

  @Column({ type: 'text', name: 'display_name' })
  displayName: string

  @Column({ type: 'text' })
  role: Role

  @Column({ type: 'text', name: 'password_hash', select: false })
  passwordHash: string

  @Column({ type: 'boolean', default: true })
  active: boolean

  @Column({ type: 'timestamptz', name: 'last_sign_in_at', nullable: true })
  lastSignInAt: Date | null

  @Column({ type: 'timestamptz', name: 'password_changed_at', nullable: true })
  passwordChangedAt: Date | null

  @OneToMany(() => ProjectMember, (m) => m.user)
  memberships: Relation<ProjectMember[]>

  @CreateDateColumn({ type: 'timestamptz', name: 'created_at' })
  createdAt: Date

  @UpdateDateColumn({ type: 'timestamptz', name: 'updated_at' })
  updatedAt: Date
}
