import { AuditEvent } from './audit-event.entity'
import { Organization } from './organization.entity'
import { Project } from './project.entity'
import { ProjectMember } from './project-member.entity'
import { User } from './user.entity'

export { AuditEvent, Organization, Project, ProjectMember, User }
export const entities = [Organization, User, Project, ProjectMember, AuditEvent]
