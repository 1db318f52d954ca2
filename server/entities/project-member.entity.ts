import { Column, CreateDateColumn, Entity, JoinColumn, ManyToOne, PrimaryColumn, type Relation } from 'typeorm'
import { Project } from './project.entity'
import { User } from './user.entity'

/** A person's membership of one project; access to a project's data requires one (admins excepted). */
@Entity({ name: 'project_member' })
export class ProjectMember {
  @PrimaryColumn({ type: 'uuid', name: 'project_id' })
  projectId: string

  @PrimaryColumn({ type: 'uuid', name: 'user_id' })
  userId: string

  @ManyToOne(() => Project, (p) => p.members, { onDelete: 'CASCADE' })
  @JoinColumn({ name: 'project_id' })
  project: Relation<Project>

  @ManyToOne(() => User, (u) => u.memberships, { onDelete: 'CASCADE' })
  @JoinColumn({ name: 'user_id' })
  user: Relation<User>

  @CreateDateColumn({ type: 'timestamptz', name: 'added_at' })
  addedAt: Date
}
