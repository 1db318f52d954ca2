/** The archive of issued handover reports, the closeout documents of a project and the handover package. */

import type { ReportSupersession } from '../record/supersession'

/** One issued (sealed, archived) report as the archive lists it. */
export interface ArchiveItem {
  reportNumber: string
  runId: string
  projectId: string
  projectCode: string
  projectName: string
  /** The project was closed; its reports stay readable (retention). */
  projectClosed: boolean
  /** IANA zone of the site: acceptance times are shown, and date filters work, in it. */
  projectTimeZone: string
  equipmentId: string
  equipmentTag: string
  equipmentKind: string
  serialNumber: string
  templateId: string
  templateName: string
  templateVersion: number
  technicianId: string | null
  technicianName: string | null
  acceptedAt: string
  failCount: number
  marginalCount: number
  openFindingCount: number
  /** SHA-256 of the sealed PDF as archived. */
  sha256: string
  sizeBytes: number
  downloadUrl: string
  /**
   * The newest later report of the same equipment and checklist, when every check this report performed has a newer
   * result (superseded as a whole); null while it is current or only partly superseded (see `supersession`).
   */
  supersededBy: string | null
  /** Supersession by check (shared/record/supersession.ts): current, partly superseded (how many, by which) or superseded. */
  supersession: ReportSupersession
}

export interface ArchivePage {
  items: ArchiveItem[]
  /** How many reports match the filters (all pages). */
  total: number
  /** Pass as `cursor` to get the next page; null on the last page. */
  nextCursor: string | null
}

/** What the archive's filter menus offer: only what the person may see and what has reports. */
export interface ArchiveFacets {
  projects: { id: string; code: string; name: string; closed: boolean; reportCount: number }[]
  equipment: { id: string; projectId: string; tag: string; kind: string; reportCount: number }[]
  templates: { id: string; name: string; reportCount: number }[]
  technicians: { id: string; name: string; active: boolean; reportCount: number }[]
}

/** Categories of closeout documents attached to a project. */
export const CLOSEOUT_CATEGORIES = ['om_manual', 'warranty', 'test_certificate', 'drawing', 'training_record', 'other'] as const
export type CloseoutCategory = (typeof CLOSEOUT_CATEGORIES)[number]
export const CLOSEOUT_CATEGORY_LABELS: Record<CloseoutCategory, string> = {
  om_manual: 'O&M manual',
  warranty: 'Warranty letter',
  test_certificate: 'Test certificate',
  drawing: 'Drawing',
  training_record: 'Training record',
  other: 'Other',
}

/** A handover file attached to a project by a contractor or admin. Never deleted through the product. */
export interface CloseoutDocument {
  id: string
  projectId: string
  title: string
  category: CloseoutCategory
  /** The date of the document itself (issue date of the letter, certificate…), YYYY-MM-DD. */
  documentDate: string
  fileName: string
  contentType: string
  sizeBytes: number
  sha256: string
  uploadedById: string
  uploadedByName: string
  uploadedAt: string
  downloadUrl: string
}

/** Version of the handover package layout (README.txt inside each ZIP describes it). */
export const HANDOVER_PACKAGE_FORMAT = 'startproof-handover'
export const HANDOVER_PACKAGE_VERSION = 1
