import { Attachment } from './attachment.entity'
import { AuditEvent } from './audit-event.entity'
import { CloseoutDocument } from './closeout-document.entity'
import { ChecklistTemplate } from './checklist-template.entity'
import { Equipment } from './equipment.entity'
import { Finding } from './finding.entity'
import { Organization } from './organization.entity'
import { OutboundMail } from './outbound-mail.entity'
import { Project } from './project.entity'
import { ProjectMember } from './project-member.entity'
import { Reading } from './reading.entity'
import { Report } from './report.entity'
import { Run } from './run.entity'
import { RunAttachment } from './run-attachment.entity'
import { RunChange } from './run-change.entity'
import { RunSnapshotRow } from './run-snapshot.entity'
import { RunStep } from './run-step.entity'
import { Signature } from './signature.entity'
import { TemplateVersion } from './template-version.entity'
import { User } from './user.entity'

export { Attachment, AuditEvent, ChecklistTemplate, CloseoutDocument, Equipment, Finding, Organization, OutboundMail, Project, ProjectMember, Reading, Report, Run, RunAttachment, RunChange, RunSnapshotRow, RunStep, Signature, TemplateVersion, User }
export const entities = [
  Organization, User, Project, ProjectMember, AuditEvent, Attachment, Equipment, ChecklistTemplate, TemplateVersion,
  Run, Reading, RunStep, RunChange, Finding, RunAttachment, Signature, OutboundMail, Report, CloseoutDocument, RunSnapshotRow,
]
