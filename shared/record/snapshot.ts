import canonicalize from 'canonicalize'
import type { ChecklistDefinition } from '../schemas/checklist'
import type { RecordEquipment, RecordProject, RecordRun } from '../types/record'
import type { SignatureRecord } from '../types/signature'
import type { FindingSummary, RunAttachment, RunDetail, RunReading, RunState, RunStepState } from '../types/run'
import { siteBarometric } from '../engineering/atmosphere'
import { countRunRecord } from './counting'
import { dispositionOf } from './disposition'

/**
 * The signed snapshot of a run: everything its verdicts and its report depend on, frozen when the performer signs.
 * Its canonical JSON (RFC 8785) is hashed with SHA-256 and that hash is what both signatures carry; after acceptance
 * the run page, the report, the archive row, the handover package and Verify read this, never the live tables.
 */
export const SNAPSHOT_FORMAT = 'startproof.run-snapshot'
/** Version 2 adds each reading's and step's `disposition`; version 1 snapshots are read as they were kept. */
export const SNAPSHOT_VERSION = 2
export const SNAPSHOT_VERSIONS_READ = [1, 2] as const

export type { RecordEquipment, RecordProject, RecordRun } from '../types/record'

export interface RunSnapshot {
  format: typeof SNAPSHOT_FORMAT
  version: (typeof SNAPSHOT_VERSIONS_READ)[number]
  run: RecordRun
  /** The pinned checklist version's definition, whole. */
  definition: ChecklistDefinition
  project: RecordProject
  equipment: RecordEquipment
  readings: Record<string, RunReading>
  steps: Record<string, RunStepState>
  /** In the order they were recorded (F1, F2 … in the report). */
  findings: FindingSummary[]
  /** With each file's SHA-256: the evidence is named by its bytes. */
  attachments: RunAttachment[]
}

export interface SnapshotParts {
  run: RecordRun
  definition: ChecklistDefinition
  project: RecordProject
  equipment: RecordEquipment
  readings: Iterable<RunReading>
  steps: Iterable<RunStepState>
  findings: FindingSummary[]
  attachments: RunAttachment[]
}

const pick = <T extends object, K extends keyof T>(o: T, keys: readonly K[]): Pick<T, K> => Object.fromEntries(keys.map((k) => [k, o[k]])) as Pick<T, K>

const PROJECT_KEYS = ['id', 'code', 'name', 'organizationName', 'siteName', 'siteAddress', 'timeZone', 'unitSystem', 'reportPaper', 'siteElevationM', 'barometricKpa'] as const
const EQUIPMENT_KEYS = ['id', 'projectId', 'tag', 'kind', 'location', 'manufacturer', 'model', 'serialNumber', 'yearBuilt', 'refrigerant', 'designPoint'] as const
const RUN_KEYS = ['id', 'projectId', 'equipmentId', 'templateId', 'templateName', 'templateVersionId', 'templateVersionNumber', 'startedAt', 'startedByName'] as const
const READING_KEYS = ['fieldId', 'entry', 'disposition', 'notApplicable', 'naReason', 'justification', 'evaluation', 'version', 'updatedAt', 'updatedByName'] as const
const STEP_KEYS = ['stepId', 'note', 'disposition', 'notApplicable', 'naReason', 'version', 'updatedAt', 'updatedByName'] as const
const FINDING_KEYS = ['id', 'runId', 'stepId', 'fieldId', 'severity', 'description', 'status', 'resolution', 'resolvedAt', 'resolvedByName', 'createdAt', 'createdByName', 'attachmentIds', 'version'] as const
const ATTACHMENT_KEYS = ['id', 'sha256', 'mimeType', 'sizeBytes', 'originalName', 'createdAt', 'stepId', 'fieldId', 'findingId', 'url', 'thumbnailUrl'] as const

/** Builds the snapshot from plain parts, keeping only what the record holds (nothing that changes with other runs). */
export function buildRunSnapshot(parts: SnapshotParts): RunSnapshot {
  const readings: Record<string, RunReading> = {}
  for (const r of parts.readings) readings[r.fieldId] = pick(r, READING_KEYS)
  const steps: Record<string, RunStepState> = {}
  for (const s of parts.steps) steps[s.stepId] = pick(s, STEP_KEYS)
  // JSON has no undefined: a value the parts leave out is stored as null, so a snapshot read back hashes the same.
  const clean = <T>(value: T): T => JSON.parse(JSON.stringify(value, (_k, v) => (v === undefined ? null : v))) as T
  return clean({
    format: SNAPSHOT_FORMAT,
    version: SNAPSHOT_VERSION,
    run: pick(parts.run, RUN_KEYS),
    definition: parts.definition,
    project: pick(parts.project, PROJECT_KEYS),
    equipment: pick(parts.equipment, EQUIPMENT_KEYS),
    readings,
    steps,
    findings: parts.findings.map((f) => pick(f, FINDING_KEYS)),
    attachments: parts.attachments.map((a) => pick(a, ATTACHMENT_KEYS)),
  })
}

/** The exact bytes that are hashed and kept: RFC 8785 canonical JSON. */
export function canonicalSnapshot(snapshot: RunSnapshot): string {
  return canonicalize(snapshot) as string
}

/** Reads a kept snapshot back; refuses anything that is not one. */
export function parseRunSnapshot(json: string): RunSnapshot {
  const value = JSON.parse(json) as RunSnapshot
  if (value?.format !== SNAPSHOT_FORMAT || !(SNAPSHOT_VERSIONS_READ as readonly number[]).includes(value.version)) throw new Error('not a run snapshot of a known format')
  return value
}

const same = (a: unknown, b: unknown) => canonicalize(a) === canonicalize(b)

/**
 * What differs between the snapshot that was signed and the run as it stands now, in words for the person who is
 * refused ("the equipment's design point: designFlow", "reading oilPressureRunning").
 */
export function describeSnapshotChanges(signed: RunSnapshot, now: RunSnapshot): string[] {
  const changes: string[] = []
  const fieldsOf = (a: Record<string, unknown>, b: Record<string, unknown>) => [...new Set([...Object.keys(a), ...Object.keys(b)])].filter((k) => !same(a[k], b[k])).sort()
  if (!same(signed.run, now.run) || !same(signed.definition, now.definition)) changes.push('the run or its checklist version')
  for (const key of fieldsOf(signed.project as unknown as Record<string, unknown>, now.project as unknown as Record<string, unknown>)) {
    changes.push(`the project's ${key} (${String((signed.project as unknown as Record<string, unknown>)[key])} → ${String((now.project as unknown as Record<string, unknown>)[key])})`)
  }
  const { designPoint: dpSigned, ...eqSigned } = signed.equipment
  const { designPoint: dpNow, ...eqNow } = now.equipment
  for (const key of fieldsOf(eqSigned, eqNow)) {
    changes.push(`the equipment's ${key} (${String((eqSigned as Record<string, unknown>)[key])} → ${String((eqNow as Record<string, unknown>)[key])})`)
  }
  const dp = fieldsOf(dpSigned, dpNow)
  if (dp.length) changes.push(`the equipment's design point: ${dp.join(', ')}`)
  const readings = fieldsOf(signed.readings, now.readings)
  if (readings.length) changes.push(`${readings.length === 1 ? 'reading' : 'readings'} ${readings.join(', ')}`)
  const steps = fieldsOf(signed.steps, now.steps)
  if (steps.length) changes.push(`${steps.length === 1 ? 'step' : 'steps'} ${steps.join(', ')}`)
  if (!same(signed.findings, now.findings)) changes.push('the findings')
  if (!same(signed.attachments, now.attachments)) changes.push('the photos and files')
  return changes
}

/** The run as every screen and the report show it after signing: the snapshot, with the run's state and signatures. */
export function runDetailFromSnapshot(s: RunSnapshot, live: { state: RunState; version: number; updatedAt: string; signatures: SignatureRecord[] }): RunDetail {
  // A version 1 snapshot has no dispositions: its "not applicable" flags are read as the not-applicable disposition.
  const readings = Object.fromEntries(Object.entries(s.readings).map(([k, r]) => [k, r.disposition === undefined ? { ...r, disposition: dispositionOf(r) } : r]))
  const steps = Object.fromEntries(Object.entries(s.steps).map(([k, x]) => [k, x.disposition === undefined ? { ...x, disposition: dispositionOf(x) } : x]))
  return {
    id: s.run.id,
    projectId: s.run.projectId,
    projectCode: s.project.code,
    projectName: s.project.name,
    equipmentId: s.run.equipmentId,
    equipmentTag: s.equipment.tag,
    equipmentKind: s.equipment.kind,
    templateId: s.run.templateId,
    templateName: s.run.templateName,
    templateVersionNumber: s.run.templateVersionNumber,
    state: live.state,
    version: live.version,
    startedAt: s.run.startedAt,
    startedByName: s.run.startedByName,
    updatedAt: live.updatedAt,
    progress: countRunRecord({ definition: s.definition, readings, steps }).totals,
    openFindings: s.findings.filter((f) => f.status === 'open').length,
    unitSystem: s.project.unitSystem,
    siteBarometricKpa: siteBarometric(s.project).kpa,
    definition: s.definition,
    designPoint: s.equipment.designPoint,
    readings,
    steps,
    findings: s.findings,
    attachments: s.attachments,
    signatures: live.signatures,
  }
}
