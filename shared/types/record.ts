// What the signed record names: the project, the equipment and the run as they were when the performer signed.

/** The project as the record names it: identity, site, units, time zone and report paper. */
export interface RecordProject {
  id: string
  code: string
  name: string
  organizationName: string
  siteName: string
  siteAddress: string
  timeZone: string
  unitSystem: 'IP' | 'SI'
  reportPaper: 'A4' | 'Letter'
}

/** The equipment as the record names it: nameplate and design point (canonical SI values). */
export interface RecordEquipment {
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
