// What the signed record names: the project, the equipment and the run as they were when the performer signed.
import type { EquipmentSummary, ProjectSummary } from './api'

/** The project as the record names it: identity, site, units, time zone and report paper, and the firm's name. */
export type RecordProject = Pick<ProjectSummary, 'id' | 'code' | 'name' | 'siteName' | 'siteAddress' | 'timeZone' | 'unitSystem' | 'reportPaper'> & Partial<Pick<ProjectSummary, 'siteElevationM' | 'barometricKpa'>> & {
  organizationName: string
}

/** The equipment as the record names it: nameplate and design point (canonical SI values). */
export type RecordEquipment = Pick<EquipmentSummary, 'id' | 'projectId' | 'tag' | 'kind' | 'location' | 'manufacturer' | 'model' | 'serialNumber' | 'yearBuilt' | 'refrigerant'> & {
  designPoint: Record<string, unknown>
}

export interface RecordRun {
  id: string
  projectId: string
  equipmentId: string
  templateId: string
  templateName: string
  templateVersionId: string
  templateVersionNumber: number
  startedAt: string
  startedByName: string | null
}
