import { Attachment } from './attachment.entity'
import { AuditEvent } from './audit-event.entity'
import { ChecklistTemplate } from './checklist-template.entity'
import { Equipment } from './equipment.entity'
import { Organization } from './organization.entity'
import { Project } from './project.entity'
import { ProjectMember } from './project-member.entity'
import { TemplateVersion } from './template-version.entity'
import { User } from './user.entity'

export { Attachment, AuditEvent, ChecklistTemplate, Equipment, Organization, Project, ProjectMember, TemplateVersion, User }
export const entities = [Organization, User, Project, ProjectMember, AuditEvent, Attachment, Equipment, ChecklistTemplate, TemplateVersion]
