import type { Role } from './roles'

/** Body of every API error response: `{ error: ApiErrorBody }`. */
export interface ApiErrorBody {
  code: string
  message: string
  /** Field path → message, for input errors (e.g. `password` → "Password is required"). */
  fields?: Record<string, string>
}

export interface ApiErrorResponse {
  error: ApiErrorBody
}

export interface SessionUser {
  id: string
  email: string
  displayName: string
  role: Role
  organizationName: string
}

export interface UserSummary {
  id: string
  email: string
  displayName: string
  role: Role
  active: boolean
  createdAt: string
  lastSignInAt: string | null
  projectIds: string[]
}

export interface ProjectSummary {
  id: string
  code: string
  name: string
  siteName: string
  siteAddress: string
  timeZone: string
  unitSystem: 'IP' | 'SI'
  distributionList: string[]
  /** Paper size of the handover reports. */
  reportPaper: 'A4' | 'Letter'
  /** Site elevation in metres, or null: the standard atmosphere there converts gauge and vacuum readings. */
  siteElevationM: number | null
  /** The site's barometric pressure in kPa when stated (wins over the elevation), or null. */
  barometricKpa: number | null
  /** When the project was closed (ISO), or null while open. A closed project starts no new runs; its reports stay readable. */
  closedAt: string | null
  memberCount: number
  equipmentCount: number
  /** Edit version: send it back with an edit; an edit made on an older one is refused (409 `edit_conflict`). */
  version: number
}

export interface ProjectMemberSummary {
  userId: string
  displayName: string
  email: string
  role: Role
  active: boolean
}

export type TemplateVersionStatus = 'draft' | 'published' | 'retired'

/** One problem in a checklist definition, by path (`sections[2].steps[0].fields[3].rule.max`). */
export interface ValidationIssue {
  path: string
  message: string
}

export interface TemplateVersionSummary {
  id: string
  templateId: string
  number: number
  status: TemplateVersionStatus
  changelog: string | null
  createdAt: string
  createdByName: string | null
  updatedAt: string
  publishedAt: string | null
  publishedByName: string | null
  retiredAt: string | null
  sectionCount: number
  stepCount: number
  fieldCount: number
  /** Edit version of a draft: send it back with a save; a save made on an older one is refused (409 `edit_conflict`). */
  version: number
}

export interface TemplateVersionDetail<Definition = unknown> extends TemplateVersionSummary {
  definition: Definition
}

export interface TemplateSummary {
  id: string
  /** Stable identifier of the template across versions, e.g. `centrifugal-chiller-startup`. */
  key: string
  name: string
  equipmentKind: string
  description: string
  /** Number of the newest published version, or null when none is published yet. */
  latestPublishedNumber: number | null
  /** Number of the open draft, or null. At most one draft exists at a time. */
  draftNumber: number | null
  versionCount: number
  updatedAt: string
}

export interface TemplateDetail extends TemplateSummary {
  /** Newest first. Non-admins see only published and retired versions. */
  versions: TemplateVersionSummary[]
}

export interface AttachmentSummary {
  id: string
  sha256: string
  mimeType: string
  sizeBytes: number
  originalName: string
  createdAt: string
}

export interface EquipmentSummary {
  id: string
  projectId: string
  tag: string
  kind: string
  location: string
  manufacturer: string
  model: string
  serialNumber: string
  yearBuilt: number | null
  refrigerant: string | null
  hasNameplatePhoto: boolean
  updatedAt: string
  /** Edit version: send it back with an edit; an edit made on an older one is refused (409 `edit_conflict`). */
  version: number
}

export interface EquipmentDetail extends EquipmentSummary {
  /** Numeric values in canonical SI (`{ value, unit }`, unit from `canonicalUnit(kind)`), plus refrigerant and flags. */
  designPoint: Record<string, unknown>
  notes: string
  nameplatePhoto: AttachmentSummary | null
  /** Tags this item had when reports on it were issued, if it was renamed since (the reports keep the tag they printed). */
  formerTags?: string[]
}
