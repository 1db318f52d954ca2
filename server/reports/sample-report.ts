import { createHash } from 'node:crypto'
import { chillerStartupDefinition } from '@shared/library'
import { evaluateChecklist } from '@shared/rules'
import type { AnyDesignPoint } from '@shared/schemas/design-point'
import { canonicalDesignPoint } from '@shared/format/design-point'
import { demoChiller } from '../db/demo-data'
import type { FieldEntry } from '@shared/schemas/reading'
import type { RecordEquipment, RecordProject } from '@shared/record'
import type { ReportInput, SignatureRecord } from '@shared/types/report'
import type { FindingSummary, RunAttachment, RunDetail, RunProgress, RunReading, RunStepState } from '@shared/types/run'
import { pngDataUrl } from './png'

// A filled chiller start-up with invented people, site and machine: the benchmark renders it, the tests start from
// it, and an admin can preview the report layout with it. The design point is the demo data's 500-ton chiller.

const yes = { value: true }
const num = (value: number, unit: string) => ({ value, unit })
const txt = (value: string) => ({ value })

const ENTRIES: Record<string, FieldEntry> = {
  safetyBriefing: yes,
  manufacturerInstructions: yes,
  supplyMatchesNameplate: yes,
  phaseRotation: yes,
  terminationsChecked: yes,
  controlPowerHealthy: yes,
  chwPumpRunning: yes,
  chwFlowProven: yes,
  cwPumpRunning: yes,
  cwFlowProven: yes,
  waterBoxesVented: yes,
  chwPressureDrop: num(19.1, 'ftH2O'),
  cwPressureDrop: num(15.8, 'ftH2O'),
  oilLevelOk: yes,
  oilHeaterOn: yes,
  oilHeaterHours: num(30, 'h'),
  refrigerantMatchesNameplate: yes,
  chargeRecorded: yes,
  leakCheckClean: yes,
  refrigerantDetectorTested: yes,
  starterCoolantLevel: txt('at_mark'),
  starterCoolingSource: txt('condenser_water'),
  starterSettingsChecked: yes,
  safetiesInCircuit: yes,
  safetySetpointsChecked: yes,
  couplingGuard: txt('hermetic'),
  oilPressureRamp: {
    value: [[0, 0], [2, 5.8], [4, 13.6], [6, 21.9], [8, 28.7], [10, 33.6], [12, 36.1], [15, 37.2], [20, 37.6], [25, 37.9], [30, 38.0], [32, 38.1], [33, 36.4], [34, 33.8], [36, 35.1], [40, 36.6], [45, 37.1], [50, 37.3]],
    unit: 'psid',
    driveStartS: 32,
  },
  oilPressureAtDriveStart: num(38.1, 'psid'),
  prelubeTime: num(32, 's'),
  starterRampTime: num(8.6, 's'),
  startWithoutTrouble: yes,
  voltsAB: num(468, 'V'),
  voltsBC: num(463, 'V'),
  voltsCA: num(471, 'V'),
  ampsA: num(402, 'A'),
  ampsB: num(409, 'A'),
  ampsC: num(396, 'A'),
  inputKw: num(279, 'kW'),
  oilPressureRunning: num(37.5, 'psid'),
  oilTempRunning: num(128, 'degF'),
  chwEntering: num(54.3, 'degF'),
  chwLeaving: num(44.2, 'degF'),
  chwFlow: num(1185, 'gpm'),
  evapPressure: num(37.0, 'psig'),
  cwEntering: num(85.4, 'degF'),
  cwLeaving: num(94.6, 'degF'),
  cwFlow: num(1490, 'gpm'),
  condPressure: num(116.0, 'psig'),
  chwSetpoint: num(44, 'degF'),
  chwFlowLossTrip: yes,
  chwFlowLossTime: num(3.2, 's'),
  cwFlowLossTrip: yes,
  cwFlowLossTime: num(4.1, 's'),
  restartBlockedWithoutFlow: yes,
  lowEvapTrip: yes,
  lowEvapSetting: num(36, 'degF'),
  lowEvapTestSetting: num(40, 'degF'),
  lowEvapTripValue: num(39.8, 'degF'),
  highCondTrip: yes,
  highCondSetting: num(150, 'psig'),
  highCondTripValue: num(155.2, 'psig'),
  lowOilTrip: yes,
  lowOilSetting: num(15, 'psid'),
  lowOilTripValue: num(14.8, 'psid'),
  settingsRestored: yes,
  safetyTestNotes: txt('High condenser pressure cutout tripped late on two attempts; the switch is on order (see finding). Every other safety tripped at its setting.'),
  trainingTopics: txt('Starting and stopping from the controller; alarms and what they mean; why the safeties are never bypassed; the daily log sheet; standby lubrication; seasonal shutdown; who to call.'),
  trainingAttendees: txt('Oskar Pemberton (chief engineer), Lena Vasquez-Hart (shift operator), Jules Ambrose (shift operator)'),
  trainingGivenBy: txt('Rafe Okafor, Tallowmere Commissioning Group'),
  trainingHours: num(3.5, 'h'),
  manualsHandedOver: yes,
  attendanceSheet: { value: ['att-attendance'] },
  taskStandbyLubrication: yes,
  taskHandTurning: txt('hermetic'),
  taskTubeBrushing: yes,
  taskOilFilter: yes,
  taskStarterCoolant: txt('explained'),
  taskOilAnalysis: yes,
  taskLeakInspections: yes,
  handoverNotes: txt('Operators will log approaches weekly for the first season so fouling shows early. Re-test of the high condenser pressure cutout to be witnessed after the switch is replaced.'),
}

const NOT_APPLICABLE: Record<string, string> = {}

const STEP_NOTES: Record<string, string> = {
  'soft-start': 'Starter ramp programmed at 8 s by the factory. Left as found; the starter supplier will confirm whether it may be shortened.',
  evaporator: 'Readings taken after 40 minutes at steady load, building load about 98 % of design.',
}

function picture(width: number, height: number, seed: number): string {
  // A stand-in for a site photograph: a plant-room wall with a pipe run and a gauge, in muted colours.
  return pngDataUrl(width, height, (x, y) => {
    const pipe = Math.abs(y - height * (0.45 + 0.1 * Math.sin(seed))) < height * 0.09
    const gauge = (x - width * 0.7) ** 2 + (y - height * 0.3) ** 2 < (height * 0.14) ** 2
    if (gauge) return [236, 232, 222, 255]
    if (pipe) return [64 + seed * 10, 110, 118, 255]
    const shade = 200 - Math.round((y / height) * 40) + ((x + y * seed) % 7)
    return [shade, shade - 6, shade - 16, 255]
  })
}

function signatureImage(seed: number): string {
  // A drawn signature stand-in: two overlapping strokes on a transparent background.
  const w = 240
  const h = 80
  return pngDataUrl(w, h, (x, y) => {
    const a = h / 2 + Math.sin(x / (9 + seed)) * 18 * Math.sin(x / 60 + seed)
    const b = h / 2 + 10 + Math.cos(x / (14 + seed)) * 9
    const ink = (Math.abs(y - a) < 1.8 && x > 12 && x < 200) || (Math.abs(y - b) < 1.4 && x > 40 && x < 228)
    return ink ? [20, 32, 60, 255] : [255, 255, 255, 0]
  })
}

/** Canonical JSON (keys sorted, no spaces) of a value. */
function canonicalJson(value: unknown): string {
  if (value === null || typeof value !== 'object') return JSON.stringify(value) ?? 'null'
  if (Array.isArray(value)) return `[${value.map((v) => canonicalJson(v === undefined ? null : v)).join(',')}]`
  const entries = Object.entries(value as Record<string, unknown>)
    .filter(([, v]) => v !== undefined)
    .sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0))
  return `{${entries.map(([k, v]) => `${JSON.stringify(k)}:${canonicalJson(v)}`).join(',')}}`
}

/** SHA-256 (hex) of the report content: the canonical JSON of the input without `contentSha256`. */
function sampleContentSha256(input: Omit<ReportInput, 'contentSha256'> & { contentSha256?: string }): string {
  const { contentSha256: _ignored, ...content } = input
  return createHash('sha256').update(canonicalJson(content)).digest('hex')
}

function progressOf(run: Pick<RunDetail, 'definition' | 'readings' | 'steps'>): RunProgress {
  const p: RunProgress = { required: 0, answered: 0, pass: 0, marginal: 0, fail: 0, incomplete: 0, notApplicable: 0 }
  for (const section of run.definition.sections) {
    for (const step of section.steps) {
      for (const field of step.fields) {
        const r = run.readings[field.id]
        if (!r) continue
        if (r.notApplicable || run.steps[step.id]?.notApplicable) {
          p.notApplicable += 1
          continue
        }
        const required = field.required !== false
        if (r.evaluation.verdict === 'incomplete') {
          if (required) (p.required += 1), (p.incomplete += 1)
          continue
        }
        if (required) (p.required += 1), (p.answered += 1)
        p[r.evaluation.verdict] += 1
      }
    }
  }
  return p
}

/** A complete, accepted chiller start-up report input with invented data (I-P project, A4 unless told). */
export function sampleReportInput(options: { paper?: 'A4' | 'Letter' } = {}): ReportInput {
  const definition = chillerStartupDefinition
  const designPoint = canonicalDesignPoint(demoChiller('CH-2', 'Central utility plant, chiller bay west', 'HX-24-0312').designPoint)
  const evaluations = evaluateChecklist(definition, { readings: ENTRIES, designPoint: designPoint as unknown as AnyDesignPoint, unitSystem: 'IP' })

  const startedAt = '2026-11-30T14:05:00.000Z'
  const readings: Record<string, RunReading> = {}
  let minute = 0
  for (const section of definition.sections) {
    for (const step of section.steps) {
      for (const field of step.fields) {
        const entry = ENTRIES[field.id] ?? null
        minute += 3
        readings[field.id] = {
          fieldId: field.id,
          entry: NOT_APPLICABLE[field.id] ? null : entry,
          notApplicable: Boolean(NOT_APPLICABLE[field.id]),
          naReason: NOT_APPLICABLE[field.id] ?? null,
          justification: null,
          evaluation: evaluations[field.id],
          version: entry ? 1 : 0,
          updatedAt: entry ? new Date(Date.parse(startedAt) + minute * 60_000).toISOString() : null,
          updatedByName: entry ? 'Rafe Okafor' : null,
        }
      }
    }
  }
  readings.starterRampTime.justification = 'Marginal accepted: the ramp is the factory setting and the start was smooth; the supplier will advise.'

  const steps: Record<string, RunStepState> = {}
  for (const section of definition.sections) {
    for (const step of section.steps) {
      steps[step.id] = {
        stepId: step.id,
        note: STEP_NOTES[step.id] ?? '',
        notApplicable: false,
        naReason: null,
        version: STEP_NOTES[step.id] ? 1 : 0,
        updatedAt: STEP_NOTES[step.id] ? '2026-11-30T16:10:00.000Z' : null,
        updatedByName: STEP_NOTES[step.id] ? 'Rafe Okafor' : null,
      }
    }
  }

  const runId = 'run-7f3c2a'
  const findings: FindingSummary[] = [
    {
      id: 'fnd-0001',
      runId,
      stepId: 'trip-high-condenser',
      fieldId: 'highCondTripError',
      severity: 'major',
      description: 'High condenser pressure cutout tripped at 155.2 psig against a 150 psig setting (3.5 % late) on two attempts.',
      status: 'open',
      resolution: null,
      resolvedAt: null,
      resolvedByName: null,
      createdAt: '2026-11-30T18:20:00.000Z',
      createdByName: 'Rafe Okafor',
      attachmentIds: ['att-cutout'],
    },
    {
      id: 'fnd-0002',
      runId,
      stepId: 'water-flow',
      fieldId: null,
      severity: 'minor',
      description: 'Vent valve cap missing on the condenser leaving water box.',
      status: 'resolved',
      resolution: 'Cap fitted by the installing contractor and checked for leaks.',
      resolvedAt: '2026-11-30T19:05:00.000Z',
      resolvedByName: 'Ines Marlow',
      createdAt: '2026-11-30T14:40:00.000Z',
      createdByName: 'Rafe Okafor',
      attachmentIds: [],
    },
  ]

  const attachment = (id: string, stepId: string, fieldId: string | null, findingId: string | null, name: string, mimeType: string): RunAttachment => ({
    id,
    sha256: createHash('sha256').update(id).digest('hex'),
    mimeType,
    sizeBytes: 184_320,
    originalName: name,
    createdAt: '2026-11-30T18:22:00.000Z',
    stepId,
    fieldId,
    findingId,
    url: `/api/runs/${runId}/attachments/${id}`,
    thumbnailUrl: mimeType.startsWith('image/') ? `/api/runs/${runId}/attachments/${id}/thumbnail` : null,
  })
  const attachments: RunAttachment[] = [
    attachment('att-cutout', 'trip-high-condenser', 'highCondTripError', 'fnd-0001', 'cutout-switch-label.jpg', 'image/png'),
    attachment('att-starter', 'soft-start', 'starterRampTime', null, 'starter-settings-display.jpg', 'image/png'),
    attachment('att-attendance', 'training-record', 'attendanceSheet', null, 'training-attendance-sheet.jpg', 'image/png'),
    attachment('att-settings', 'safeties', null, null, 'controller-settings-sheet.pdf', 'application/pdf'),
  ]

  const project: RecordProject = {
    id: 'prj-vxh',
    organizationName: 'Tallowmere Commissioning Group',
    code: 'VXH-CUP',
    name: 'Vexley General Hospital — central utility plant chiller replacement',
    siteName: 'Vexley General Hospital',
    siteAddress: '1400 Fernhollow Road, Marrowick, IL 60999',
    timeZone: 'America/Chicago',
    unitSystem: 'IP',
    reportPaper: options.paper ?? 'A4',
  }
  const equipment: RecordEquipment = {
    id: 'eq-ch2',
    projectId: project.id,
    tag: 'CH-2',
    kind: 'centrifugal_chiller',
    location: 'Central utility plant, chiller bay west',
    manufacturer: 'Halvard Thermal',
    model: 'HT-C500',
    serialNumber: 'HX-24-0312',
    yearBuilt: 2024,
    refrigerant: 'R-134a',
    designPoint,
  }

  const runBase = { definition, readings, steps }
  const run: RunDetail = {
    id: runId,
    projectId: project.id,
    projectCode: project.code,
    projectName: project.name,
    equipmentId: equipment.id,
    equipmentTag: equipment.tag,
    equipmentKind: equipment.kind,
    templateId: 'tpl-chiller',
    templateName: 'Water-cooled centrifugal chiller start-up',
    templateVersionNumber: 1,
    state: 'accepted',
    version: 6,
    startedAt,
    startedByName: 'Rafe Okafor',
    updatedAt: '2026-12-01T22:42:00.000Z',
    progress: progressOf(runBase),
    openFindings: findings.filter((f) => f.status === 'open').length,
    unitSystem: 'IP',
    designPoint,
    findings,
    attachments,
    signatures: [],
    ...runBase,
  }

  const signature = (s: Partial<SignatureRecord> & Pick<SignatureRecord, 'id' | 'meaning' | 'printedName' | 'role' | 'signedAtUtc' | 'signedAtLocal'>, seed: number): SignatureRecord => ({
    meaningLabel: s.meaning === 'performed_by' ? 'Performed by' : 'Accepted by',
    signerId: `usr-${s.id}`,
    timeZone: project.timeZone,
    imageDataUrl: signatureImage(seed),
    snapshotSha256: createHash('sha256').update(`snapshot-${s.id}`).digest('hex'),
    voided: false,
    voidedAt: null,
    voidReason: null,
    ...s,
  })
  const signatures: SignatureRecord[] = [
    signature({
      id: 'sig-1', meaning: 'performed_by', printedName: 'Rafe Okafor', role: 'Commissioning technician',
      signedAtUtc: '2026-12-01T15:02:00.000Z', signedAtLocal: '2026-12-01 09:02 CST',
      voided: true, voidedAt: '2026-12-01T17:30:00.000Z', voidReason: 'Returned by the owner’s representative: heat balance to be re-read after the condenser flow was rebalanced.',
    }, 1),
    signature({ id: 'sig-2', meaning: 'performed_by', printedName: 'Rafe Okafor', role: 'Commissioning technician', signedAtUtc: '2026-12-01T21:15:00.000Z', signedAtLocal: '2026-12-01 15:15 CST' }, 2),
    signature({ id: 'sig-3', meaning: 'accepted_by', printedName: 'Maren Solvik', role: 'Owner’s representative', signedAtUtc: '2026-12-01T22:42:00.000Z', signedAtLocal: '2026-12-01 16:42 CST' }, 3),
  ]

  run.signatures = signatures

  const reportNumber = 'SP-2026-000001'
  const input: Omit<ReportInput, 'contentSha256'> = {
    reportNumber,
    organizationName: 'Tallowmere Commissioning Group',
    paper: options.paper ?? 'A4',
    project,
    equipment,
    run,
    signatures,
    snapshotSha256: signatures[0].snapshotSha256,
    verifyUrl: `https://startproof.example.test/verify/${reportNumber}`,
    generatedAtUtc: '2026-12-01T22:43:10.000Z',
    photoDataUrls: {
      'att-cutout': picture(320, 240, 1),
      'att-starter': picture(320, 240, 2),
      'att-attendance': picture(240, 320, 3),
    },
  }
  return { ...input, contentSha256: sampleContentSha256(input) }
}
