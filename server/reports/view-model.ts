import { DEFER } from '@shared/library/cautions'
import { acceptanceWords, byOthersOf, countRunRecord, describeDisposition, DISPOSITION_WORDS, exceptionsOf, OUTCOME_WORDS, performerStatement, SEVERITY_WORDS as SEVERITY_MEANINGS, type CheckOutcome, type CheckResult, type RecordException, type RunCount } from '@shared/record'
import { classify, conditionRuleWords, parseExpression, resolveRampRule, worstVerdict, type FieldEvaluation, type Verdict } from '@shared/rules'
import { EngineeringError, siteBarometric } from '@shared/engineering'
import type { ChecklistField, ChecklistSection, ChecklistStep, RampRule } from '@shared/schemas/checklist'
import { DESIGN_POINT_QUANTITIES, EQUIPMENT_KIND_LABELS, isDesignPointKey, isEquipmentKind, type AnyDesignPoint, type DesignPointKey } from '@shared/schemas/design-point'
import type { SeriesEntry } from '@shared/schemas/reading'
import type { ReportInput, SignatureRecord } from '@shared/types/report'
import type { FindingSummary, RunReading } from '@shared/types/run'
import { convert, convertDifference, displayUnit, distinguishingDecimals, formatNumber, formatQuantity, fromCanonical, signedText, unitLabel, unitSpec, type QuantityKind, type UnitSystem } from '@shared/units'
// The design-point rows the equipment pages show, in the project's units (pure functions; no Vue inside).
import { designPointRows, designPointUnit } from '@shared/format/design-point'
import { deviationText } from '@shared/format/deviation'

/** A verdict as printed: its key (for the shape) and its word. */
export interface VerdictView {
  /** The outcome (shared/record/counting.ts): a judged verdict, recorded, or a disposition. */
  key: CheckOutcome
  word: string
  /** Judged outcomes carry a shape; recorded values and dispositions are printed as words only. */
  judged: boolean
}

export interface FieldRowView {
  id: string
  label: string
  value: string
  /** Long free text is printed as a paragraph under the label instead of in the value column. */
  longText: boolean
  limits: string
  verdict: VerdictView | null
  message: string
  /** The field has a disposition (its own, its step's, or its input's): greyed, not judged. */
  notApplicable: boolean
  /** The disposition's words when printed on this row (null when the step prints it once for all its rows). */
  naReason: string | null
  justification: string | null
  findingRefs: string[]
}

export interface StepView {
  id: string
  title: string
  fields: FieldRowView[]
  note: string
  notApplicable: boolean
  /** The step's disposition, or the one disposition every set-aside field of the step shares, printed once. */
  naReason: string | null
  /** The tag beside the step title: "Done by others", "Carried over" … */
  naTag: string | null
  cautions: string[]
}

export interface SectionView {
  id: string
  title: string
  steps: StepView[]
}

export interface ProblemView {
  where: string
  label: string
  verdict: VerdictView
  message: string
  findingRefs: string[]
  justification: string | null
}

export interface DesignRowView {
  designLabel: string
  designText: string
  measuredLabel: string
  measuredText: string
  deviation: string
  verdict: VerdictView | null
  /** The first row of a design value that several readings relate to (the others leave the design cells empty). */
  first: boolean
}

export interface TimingRowView {
  label: string
  value: string
  limits: string
  verdict: VerdictView | null
}

export interface RampView {
  fieldId: string
  label: string
  unit: string
  points: Array<[number, number]>
  setpoint: number | null
  floor: number | null
  warnFloor: number | null
  reachWithinS: number | null
  holdS: number | null
  reachedAtS: number | null
  driveStartS: number | null
  verdict: VerdictView
  message: string
}

export interface ExceptionView {
  id: string
  kindWord: string
  severity: string | null
  where: string
  detail: string
  followUp: string
  findingRefs: string[]
  dueDate: string | null
}

const EXCEPTION_WORDS: Record<RecordException['kind'], string> = { fail: 'Fail', marginal: 'Marginal, not justified', deferred: 'Deferred', not_done: 'Not done', finding: 'Open finding' }

function exceptionView(e: RecordException, findingRefs: Map<string, string>): ExceptionView {
  return {
    id: e.id,
    kindWord: EXCEPTION_WORDS[e.kind],
    severity: e.severity ? SEVERITY_MEANINGS[e.severity].label : null,
    where: e.where,
    detail: e.detail.replace(/\.$/, ''),
    followUp: e.followUp,
    findingRefs: e.findingIds.map((id) => findingRefs.get(id)).filter((r): r is string => Boolean(r)),
    dueDate: e.dueDate,
  }
}

function describeTotalsLine(p: RunCount['totals']): string {
  const parts = [`${p.pass} pass`, `${p.marginal} marginal`, `${p.fail} fail`, `${p.incomplete} incomplete`, `${p.recorded} recorded`]
  if (p.notApplicable) parts.push(`${p.notApplicable} not applicable`)
  if (p.byOthers) parts.push(`${p.byOthers} done by others`)
  if (p.verifiedEarlier) parts.push(`${p.verifiedEarlier} carried over`)
  if (p.deferred) parts.push(`${p.deferred} deferred`)
  if (p.notDone) parts.push(`${p.notDone} not done`)
  return `Of ${p.checks} checks: ${parts.join(', ')}.`
}

export interface FindingView {
  ref: string
  severity: string
  status: string
  open: boolean
  description: string
  where: string
  raised: string
  resolution: string | null
  resolved: string | null
  photoRefs: string[]
}

export interface PhotoView {
  ref: string
  dataUrl: string
  caption: string
  detail: string
}

export interface SignatureView {
  meaningLabel: string
  printedName: string
  role: string
  signedAtUtc: string
  signedAtLocal: string
  imageDataUrl: string | null
  snapshotSha256: string
  voided: boolean
  voidedAt: string | null
  voidReason: string | null
}

export interface ReportView {
  reportNumber: string
  organizationName: string
  title: string
  paper: 'A4' | 'Letter'
  project: { name: string; code: string; siteName: string; siteAddress: string; timeZone: string; unitSystem: string }
  equipment: { tag: string; kindLabel: string; location: string; nameplate: Array<{ label: string; value: string }> }
  run: { id: string; template: string; state: string; startedAt: string; lastReadingAt: string; acceptedAt: string | null; performedBy: string | null; acceptedBy: string | null }
  generatedAt: string
  overall: VerdictView
  counts: Array<{ verdict: VerdictView | null; word: string; count: number }>
  /** Every check of the run (shared/record/counting.ts): judged, recorded and set aside; optional blanks are not checks. */
  totalChecks: number
  judgedChecks: number
  /** A re-test: which report it supersedes and for which checks, in words (null for a first report). */
  supersedes: string | null
  /** "93 checks: 61 pass, …" as one line. */
  totalsLine: string
  /** "Accepted" / "Accepted with 3 exceptions" (null until accepted). */
  acceptance: string | null
  exceptions: ExceptionView[]
  /** Work recorded as done by others, by who and their record. */
  byOthers: Array<{ by: string; reference: string | null; witnessed: boolean | null; where: string[]; checks: number }>
  /** What the performer's signature states. */
  performerStatement: string
  acceptedWithOpenFindings: boolean
  problems: ProblemView[]
  missing: ProblemView[]
  openFindingCount: number
  designRows: DesignRowView[]
  /**
   * The conditions the running readings were taken under, in words, printed with the design table: the load, the
   * capacity and condenser-water control, the site's atmosphere, and how water-side heat was worked out.
   */
  testConditions: string[]
  ramp: RampView | null
  timings: TimingRowView[]
  electrical: FieldRowView[]
  waterSide: Array<{ title: string; rows: FieldRowView[] }>
  sections: SectionView[]
  findings: FindingView[]
  photos: PhotoView[]
  otherAttachments: Array<{ name: string; where: string }>
  recommendations: string[]
  handoverTasks: FieldRowView[]
  handoverNotes: string[]
  cautions: string[]
  deferStatement: string
  signatures: SignatureView[]
  voidedSignatures: SignatureView[]
  verification: { contentSha256: string; verifyUrl: string; generatedAtUtc: string }
}

const JUDGED = new Set<CheckOutcome>(['pass', 'marginal', 'fail', 'incomplete'])
const verdictView = (v: CheckOutcome | Verdict): VerdictView => ({ key: v, word: OUTCOME_WORDS[v], judged: JUDGED.has(v) })

const SEVERITY_WORDS: Record<FindingSummary['severity'], string> = { minor: 'Minor', major: 'Major', critical: 'Critical' }
const STATE_WORDS: Record<string, string> = { in_progress: 'In progress', submitted: 'Submitted, awaiting acceptance', accepted: 'Accepted', returned: 'Returned to the technician' }

/** "2026-12-01 16:42 CST": an instant in a time zone, to the minute, with the zone's short name. */
export function dateTimeIn(iso: string | null | undefined, timeZone: string): string {
  if (!iso) return '—'
  const date = new Date(iso)
  if (Number.isNaN(date.getTime())) return '—'
  let parts: Intl.DateTimeFormatPart[]
  try {
    parts = new Intl.DateTimeFormat('en-US', { timeZone, year: 'numeric', month: '2-digit', day: '2-digit', hour: '2-digit', minute: '2-digit', hourCycle: 'h23', timeZoneName: 'short' }).formatToParts(date)
  } catch {
    return dateTimeIn(iso, 'UTC')
  }
  const p = (type: Intl.DateTimeFormatPartTypes) => parts.find((x) => x.type === type)?.value ?? ''
  return `${p('year')}-${p('month')}-${p('day')} ${p('hour')}:${p('minute')} ${p('timeZoneName')}`
}

const utc = (iso: string | null | undefined) => dateTimeIn(iso, 'UTC')

// Only pictures embedded as base64 data URLs are printed; anything else (a link, a file path) is left out.
const IMAGE_DATA_URL = /^data:image\/(png|jpeg|webp|gif);base64,[A-Za-z0-9+/=\r\n]+$/
const safeImage = (url: string | null | undefined): string | null => (url && IMAGE_DATA_URL.test(url) ? url : null)

interface Context {
  input: ReportInput
  count: RunCount
  system: UnitSystem
  fields: Map<string, { field: ChecklistField; step: ChecklistStep; section: ChecklistSection }>
  findingRefs: Map<string, string>
  photoRefs: Map<string, string>
}

/**
 * The unit a field is printed in: its own unit for times (hours stay hours), the design point's unit for a reading
 * judged against the design point (pressure drops in feet of water, as the design point shows them), else the
 * project's display unit the evaluation used.
 */
function shownUnit(field: ChecklistField, evaluation: FieldEvaluation | undefined, system: UnitSystem): string | null {
  const kind = field.quantity as QuantityKind | undefined
  if (!kind) return null
  if (kind === 'time' && field.unit) return field.unit
  const rule = field.rule
  if (rule && (rule.type === 'design' || rule.type === 'design_offset') && isDesignPointKey(rule.key) && DESIGN_POINT_QUANTITIES[rule.key] === kind) return designPointUnit(rule.key, system)
  return evaluation?.display?.unit ?? evaluation?.limits?.display.unit ?? displayUnit(kind, system)
}

/** The limits of an evaluation in words, in the unit the field is printed in. */
/** The ramp rule with its setpoint and floors resolved from the design point; null when the design point lacks the value. */
function resolvedRamp(rule: RampRule, field: ChecklistField, designPoint: Record<string, unknown>): ReturnType<typeof resolveRampRule> | null {
  try {
    return resolveRampRule(rule, field, designPoint as AnyDesignPoint)
  } catch (err) {
    if (err instanceof EngineeringError) return null
    throw err
  }
}

function limitsInWords(field: ChecklistField, evaluation: FieldEvaluation | undefined, system: UnitSystem, designPoint: Record<string, unknown>): string {
  const rule = field.rule
  if (!rule) return field.computed ? 'Computed; no limit' : 'Recorded; no limit'
  if (rule.type === 'yes_no') return `${rule.expected ? 'Yes' : 'No'} required`
  if (rule.type === 'choice') {
    const label = (v: string) => field.choices?.find((c) => c.value === v)?.label ?? v
    const pass = rule.pass.map(label).join('; ')
    const marginal = rule.marginal?.length ? `; with reservations: ${rule.marginal.map(label).join('; ')}` : ''
    return `Acceptable: ${pass}${marginal}`
  }
  const limits = evaluation?.limits
  if (rule.type === 'design_reference' || (rule.type === 'rated_at_load' && evaluation?.verdict === 'recorded')) {
    return capitalise(`${conditionRuleWords(rule)}${limits?.basis ? ` (${limits.basis})` : ''}`)
  }
  if (!limits) return evaluation?.problem ? evaluation.problem.message : '—'
  const kind = field.quantity as QuantityKind
  const from = limits.display.unit
  const unit = shownUnit(field, evaluation, system) ?? from
  const decimals = unitSpec(kind, unit).decimals
  const at = (v: number) => convert(v, from, unit, kind)
  const q = (v: number) => formatQuantity(at(v), unit, kind)
  const n = (v: number) => formatNumber(at(v), decimals)
  if (rule.type === 'ramp') {
    const s = (v: number) => `${formatNumber(v, 1)} s`
    const resolved = resolvedRamp(rule, field, designPoint)
    if (!resolved) return evaluation?.problem ? evaluation.problem.message : '—'
    const setpoint = convert(resolved.setpoint, field.unit as string, unit, kind)
    const parts = [`reach ${formatQuantity(setpoint, unit, kind)}${resolved.basis ? ` (${resolved.basis})` : ''} within ${s(rule.reachWithinS)}`]
    if (rule.reachNotBeforeS !== undefined) parts.push(`not before ${s(rule.reachNotBeforeS)}`)
    if (rule.holdS) parts.push(`hold at or above it ${s(rule.holdS)} before the drive starts`)
    if (limits.display.min !== undefined) parts.push(`never below ${q(limits.display.min)} after`)
    if (limits.display.warnMin !== undefined) parts.push(`marginal below ${q(limits.display.warnMin)}`)
    return capitalise(parts.join('; '))
  }
  const { min, max, warnMin, warnMax } = limits.display
  const parts: string[] = []
  if (min !== undefined && max !== undefined) parts.push(`${n(min)} to ${q(max)}`)
  else if (min !== undefined) parts.push(`at least ${q(min)}`)
  else if (max !== undefined) parts.push(`at most ${q(max)}`)
  const warn: string[] = []
  if (warnMin !== undefined) warn.push(`below ${q(warnMin)}`)
  if (warnMax !== undefined) warn.push(`above ${q(warnMax)}`)
  if (warn.length) parts.push(`marginal ${warn.join(' or ')}`)
  let basis = limits.basis
  if ((rule.type === 'design' || rule.type === 'design_offset') && unit !== from && isDesignPointKey(rule.key)) {
    // The shared basis is written in the display unit; say it again in the unit printed here.
    const fieldUnit = field.unit as string
    const stored = designPoint[rule.key] as { value: number; unit: string } | undefined
    const designText = stored ? formatQuantity(fromCanonical(stored.value, unit, kind), unit, kind) : 'value missing'
    const sides =
      rule.type === 'design'
        ? [rule.lowerPct === undefined ? null : signedText(-rule.lowerPct, `${formatNumber(rule.lowerPct, 1)} %`), rule.upperPct === undefined ? null : signedText(rule.upperPct, `${formatNumber(rule.upperPct, 1)} %`)]
        : [rule.lower === undefined ? null : signedText(-rule.lower, formatQuantity(convertDifference(rule.lower, fieldUnit, unit, kind), unit, kind)), rule.upper === undefined ? null : signedText(rule.upper, formatQuantity(convertDifference(rule.upper, fieldUnit, unit, kind), unit, kind))]
    basis = `design ${designText}${sides.some(Boolean) ? `, ${sides.filter(Boolean).join(' to ')}` : ''}`
  }
  return capitalise(`${parts.join('; ')}${basis ? ` (${basis})` : ''}`)
}

const capitalise = (s: string) => (s ? s[0].toUpperCase() + s.slice(1) : s)

function seriesEntry(reading: RunReading | undefined): SeriesEntry | null {
  const e = reading?.entry as SeriesEntry | null | undefined
  return e && Array.isArray(e.value) && typeof e.unit === 'string' ? e : null
}

/** The value of a field as printed: number with unit, Yes/No, the choice's words, the text, photo count. */
function valueText(field: ChecklistField, reading: RunReading | undefined, system: UnitSystem): string {
  const evaluation = reading?.evaluation
  if (!reading || !evaluation) return 'Not recorded'
  if (reading.notApplicable) return 'Not applicable'
  if (field.kind === 'time_series') {
    const e = seriesEntry(reading)
    if (!e) return 'Not recorded'
    const drive = e.driveStartS === undefined ? '' : `, drive start at ${formatNumber(e.driveStartS, 1)} s`
    return `${e.value.length} readings over ${formatNumber(e.value[e.value.length - 1][0], 1)} s${drive}`
  }
  if (evaluation.display) {
    const kind = field.quantity as QuantityKind
    const unit = shownUnit(field, evaluation, system) ?? evaluation.display.unit
    const value = convert(evaluation.display.value, evaluation.display.unit, unit, kind)
    // Enough digits to justify the verdict at a boundary: 1.002 % against a 1 % warning level never prints as "1 %".
    const limits = evaluation.limits ? Object.entries(evaluation.limits.display).filter(([k, v]) => k !== 'unit' && typeof v === 'number').map(([, v]) => convert(v as number, evaluation.limits!.display.unit, unit, kind)) : []
    const extra = limits.length ? distinguishingDecimals(value, limits, unitSpec(kind, unit).decimals) : 0
    // As it was typed (its digits, inches of vacuum), unless the boundary needs more digits than it carries.
    if (unit === evaluation.display.unit && evaluation.display.text && extra === 0) return evaluation.display.text
    return formatQuantity(value, unit, kind, extra)
  }
  const answer = evaluation.answer
  if (typeof answer === 'boolean') return answer ? 'Yes' : 'No'
  if (field.kind === 'choice' && typeof answer === 'string') return field.choices?.find((c) => c.value === answer)?.label ?? answer
  if (field.kind === 'photo' && Array.isArray(answer)) return `${answer.length} photo${answer.length === 1 ? '' : 's'} attached`
  if (typeof answer === 'string') return answer
  return evaluation.verdict === 'incomplete' ? (field.required === false ? 'Not recorded (optional)' : 'Not recorded') : '—'
}

function fieldRow(ctx: Context, id: string): FieldRowView | null {
  const place = ctx.fields.get(id)
  if (!place) return null
  const { field } = place
  const reading = ctx.input.run.readings[id]
  const result = ctx.count.results.get(id) as CheckResult
  const evaluation = reading?.evaluation
  const refs = ctx.input.run.findings.filter((f) => f.fieldId === id).map((f) => ctx.findingRefs.get(f.id) as string)
  const disposition = result.disposition
  const outcome = result.outcome
  let value: string
  if (disposition) value = DISPOSITION_WORDS[disposition.kind].label
  else if (outcome === null) value = '—'
  else value = valueText(field, reading, ctx.system)
  return {
    id,
    label: field.label,
    value,
    longText: field.kind === 'text' && !disposition && typeof evaluation?.answer === 'string' && evaluation.answer.length > 0,
    limits: disposition ? '—' : limitsInWords(field, evaluation, ctx.system, ctx.input.equipment.designPoint),
    verdict: outcome === null || disposition ? null : verdictView(outcome),
    message: evaluation?.message ?? '',
    notApplicable: disposition !== null,
    naReason: disposition && result.dispositionFrom === 'field' ? describeDisposition(disposition) : disposition && result.dispositionFrom === 'input' ? `${describeDisposition(disposition)} (computed from ${ctx.fields.get(result.dispositionInput as string)?.field.label.toLowerCase() ?? 'a reading set aside'})` : null,
    justification: reading?.justification ?? null,
    findingRefs: refs,
  }
}

const rows = (ctx: Context, ids: string[]) => ids.map((id) => fieldRow(ctx, id)).filter((r): r is FieldRowView => r !== null)

function whereOf(ctx: Context, stepId: string, fieldId: string | null): string {
  for (const section of ctx.input.run.definition.sections) {
    const step = section.steps.find((s) => s.id === stepId)
    if (!step) continue
    const field = fieldId ? step.fields.find((f) => f.id === fieldId) : undefined
    return [section.title, step.title, field?.label].filter(Boolean).join(' › ')
  }
  return stepId
}

const designRefsCache = new WeakMap<ChecklistField, string[]>()
function designRefsOf(field: ChecklistField): string[] {
  let refs = designRefsCache.get(field)
  if (!refs) {
    try {
      refs = field.computed ? parseExpression(field.computed.expression).designRefs : []
    } catch {
      refs = []
    }
    designRefsCache.set(field, refs)
  }
  return refs
}

const HANDOVER_SECTION = 'handover'

// Readings that relate to design values without an acceptance rule naming them (the starter template's ids).
const RELATED_WITHOUT_RULE: Partial<Record<DesignPointKey, string[]>> = { inputPower: ['inputKw'] }

/** The test conditions of the running readings, from the fields the checklist has and the site's atmosphere. */
function testConditions(ctx: Context): string[] {
  const out: string[] = []
  const readings = ctx.input.run.readings
  const answered = (id: string) => {
    const place = ctx.fields.get(id)
    const result = ctx.count.results.get(id)
    if (!place || !result || result.disposition || result.outcome === null || result.outcome === 'incomplete') return null
    return { field: place.field, reading: readings[id] }
  }
  const load = answered('testLoad')
  const amps = answered('loadAmpsPct')
  const loadWords = [load ? `${valueText(load.field, load.reading, ctx.system)} of design capacity` : null, amps ? `motor current ${valueText(amps.field, amps.reading, ctx.system)} of rated load amps` : null].filter(Boolean)
  if (loadWords.length) out.push(`Load during the running readings: ${loadWords.join('; ')}.`)
  for (const id of ['capacityControl', 'condenserControl']) {
    const a = answered(id)
    if (a) out.push(`${a.field.label}: ${lowerFirst(valueText(a.field, a.reading, ctx.system))}.`)
  }
  const hasGauge = [...ctx.fields.values()].some(({ field }) => field.computed && /saturation(TempF|PressurePsig)/.test(field.computed.expression))
  if (hasGauge) {
    const measured = [...ctx.fields.values()].find(({ field }) => field.siteBarometric)
    const own = measured ? answered(measured.field.id) : null
    const site = siteBarometric(ctx.input.project)
    const kpa = (v: number) => `${formatNumber(v, 1)} kPa (${formatNumber(convert(v, 'kPaa', 'inHgAbs', 'pressure_absolute'), 2)} inHg)`
    out.push(
      own
        ? `Gauge and vacuum pressures converted to absolute with the barometric pressure read on site, ${valueText(own.field, own.reading, ctx.system)}.`
        : site.source === 'stated'
          ? `Gauge and vacuum pressures converted to absolute with the project's site barometric pressure, ${kpa(site.kpa)}.`
          : site.source === 'elevation'
            ? `Gauge and vacuum pressures converted to absolute with the standard atmosphere at the site's ${formatNumber(ctx.input.project.siteElevationM as number, 0)} m elevation, ${kpa(site.kpa)}.`
            : `Gauge and vacuum pressures converted to absolute with the standard sea-level atmosphere, ${kpa(site.kpa)}: no site elevation or barometric pressure was given.`,
    )
  }
  const methods = [...ctx.fields.values()].map(({ field }) => field.computed?.expression ?? '')
  if (methods.some((e) => e.includes('waterHeatTons') || e.includes('capacityKw'))) out.push('Water-side heat: flow × density × specific heat × temperature difference, with the properties of water at the mean water temperature (IAPWS-IF97).')
  else if (methods.some((e) => e.includes('capacityTons'))) out.push('Water-side heat: the 500 rule, 500 × gpm × temperature difference (Btu/h), which fixes the properties of water near 60 °F.')
  return out
}

const lowerFirst = (s: string) => (s ? s[0].toLowerCase() + s.slice(1) : s)

function designRows(ctx: Context): DesignRowView[] {
  const { equipment } = ctx.input
  if (!isEquipmentKind(equipment.kind)) return []
  const out: DesignRowView[] = []
  for (const row of designPointRows(equipment.designPoint, equipment.kind, ctx.system)) {
    if (row.value === null) continue
    const kind = DESIGN_POINT_QUANTITIES[row.key]
    const related: ChecklistField[] = []
    for (const { field } of ctx.fields.values()) {
      const rule = field.rule
      if (rule && (rule.type === 'design' || rule.type === 'design_offset' || rule.type === 'design_reference' || rule.type === 'rated_at_load') && rule.key === row.key && field.quantity === kind) related.push(field)
      else if (field.computed && designRefsOf(field).includes(row.key)) related.push(field)
    }
    for (const id of RELATED_WITHOUT_RULE[row.key] ?? []) {
      const place = ctx.fields.get(id)
      if (place && place.field.quantity === kind && !related.includes(place.field)) related.push(place.field)
    }
    if (!related.length) {
      out.push({ designLabel: row.label, designText: row.text, measuredLabel: 'Not measured in this checklist', measuredText: '—', deviation: '—', verdict: null, first: true })
      continue
    }
    related.forEach((field, i) => {
      const reading = ctx.input.run.readings[field.id]
      const evaluation = reading?.evaluation
      // The same outcome as the checklist record and the counts: one rule (shared/record/counting.ts).
      const result = ctx.count.results.get(field.id) as CheckResult
      const setAside = result.disposition
      const canonicalValue = setAside || result.outcome === null ? null : evaluation?.canonical ?? null
      let measuredText = setAside ? DISPOSITION_WORDS[setAside.kind].label : result.outcome === null ? '—' : 'Not recorded'
      let deviation = '—'
      if (canonicalValue && field.quantity !== kind) {
        // A computed check against the design value (e.g. setpoint above the lowest allowed): its own value and unit.
        measuredText = valueText(field, reading, ctx.system)
      } else if (canonicalValue) {
        const measured = fromCanonical(canonicalValue.value, row.unit, kind)
        measuredText = formatQuantity(measured, row.unit, kind)
        deviation = deviationText(measured, row.value as number, kind, row.unit) ?? '—'
      }
      out.push({
        designLabel: i === 0 ? row.label : '',
        designText: i === 0 ? row.text : '',
        measuredLabel: field.label,
        measuredText,
        deviation,
        verdict: setAside || result.outcome === null ? null : verdictView(result.outcome),
        first: i === 0,
      })
    })
  }
  return out
}

function rampView(ctx: Context): RampView | null {
  const place = ctx.fields.get('oilPressureRamp') ?? [...ctx.fields.values()].find((p) => p.field.kind === 'time_series' && p.field.rule?.type === 'ramp')
  if (!place) return null
  const reading = ctx.input.run.readings[place.field.id]
  const entry = seriesEntry(reading)
  const evaluation = reading?.evaluation
  if (!entry || !evaluation || ctx.count.results.get(place.field.id)?.disposition) return null
  const kind = place.field.quantity as QuantityKind
  const shown = evaluation.series?.unit ?? displayUnit(kind, ctx.system)
  const rule = place.field.rule as RampRule
  const resolved = resolvedRamp(rule, place.field, ctx.input.equipment.designPoint)
  if (!resolved) return null
  const toShown = (v: number | undefined) => (v === undefined ? null : convert(v, place.field.unit as string, shown, kind))
  return {
    fieldId: place.field.id,
    label: place.field.label,
    unit: unitLabel(kind, shown),
    points: entry.value.map(([t, v]) => [t, convert(v, entry.unit, shown, kind)]),
    setpoint: toShown(resolved.setpoint),
    floor: toShown(resolved.floor),
    warnFloor: toShown(resolved.warnFloor),
    reachWithinS: rule.reachWithinS,
    holdS: rule.holdS ?? null,
    reachedAtS: evaluation.series?.timeToSetpointS ?? null,
    driveStartS: entry.driveStartS ?? null,
    verdict: verdictView(evaluation.verdict),
    message: evaluation.message,
  }
}

function timingRows(ctx: Context, ramp: RampView | null): TimingRowView[] {
  const out: TimingRowView[] = []
  const fromField = (id: string) => {
    const r = fieldRow(ctx, id)
    if (r) out.push({ label: r.label, value: r.value, limits: r.limits, verdict: r.verdict })
  }
  fromField('prelubeTime')
  const place = ramp ? ctx.fields.get(ramp.fieldId) : undefined
  const series = place ? ctx.input.run.readings[place.field.id]?.evaluation.series : undefined
  if (ramp && series && place?.field.rule?.type === 'ramp') {
    const rule = place.field.rule
    const s = (v: number) => `${formatNumber(v, 1)} s`
    const q = (v: number) => `${formatNumber(v, 1)} ${ramp.unit}`
    const reached = series.timeToSetpointS
    const reachOk = reached !== null && reached <= rule.reachWithinS + 1e-9 && (rule.reachNotBeforeS === undefined || reached >= rule.reachNotBeforeS)
    out.push({
      label: `Time to the oil pressure setpoint (${q(ramp.setpoint as number)})`,
      value: reached === null ? 'Never reached' : s(reached),
      limits: `Within ${s(rule.reachWithinS)}${rule.reachNotBeforeS !== undefined ? `, not before ${s(rule.reachNotBeforeS)}` : ''}`,
      verdict: verdictView(reachOk ? 'pass' : 'fail'),
    })
    if (rule.holdS) {
      out.push({
        label: 'Hold at or above the setpoint before the drive started',
        value: s(series.holdAchievedS),
        limits: `At least ${s(rule.holdS)}`,
        verdict: verdictView(series.holdAchievedS >= rule.holdS - 1e-9 ? 'pass' : 'fail'),
      })
    }
    if (ramp.floor !== null || ramp.warnFloor !== null) {
      const min = series.minimumAfterSetpoint
      const limits = [ramp.floor !== null ? `not below ${q(ramp.floor)}` : null, ramp.warnFloor !== null ? `marginal below ${q(ramp.warnFloor)}` : null].filter(Boolean).join('; ')
      out.push({
        label: 'Lowest oil pressure after reaching the setpoint',
        value: min === null ? '—' : q(min),
        limits: capitalise(limits),
        verdict: min === null ? verdictView('fail') : verdictView(classify(min, { min: ramp.floor ?? undefined, warnMin: ramp.warnFloor ?? undefined }).verdict),
      })
    }
  }
  fromField('oilPressureAtDriveStart')
  fromField('starterRampTime')
  return out
}

function collectCautions(sections: ChecklistSection[]): string[] {
  const seen = new Set<string>()
  for (const section of sections) {
    for (const step of section.steps) {
      for (const c of step.cautions ?? []) seen.add(c)
      for (const f of step.fields) for (const c of f.cautions ?? []) seen.add(c)
    }
  }
  seen.delete(DEFER)
  return [...seen]
}

function signatureView(s: SignatureRecord): SignatureView {
  return {
    meaningLabel: s.meaningLabel,
    printedName: s.printedName,
    role: s.role,
    signedAtUtc: utc(s.signedAtUtc),
    signedAtLocal: s.signedAtLocal || dateTimeIn(s.signedAtUtc, s.timeZone),
    imageDataUrl: safeImage(s.imageDataUrl),
    snapshotSha256: s.snapshotSha256,
    voided: s.voided,
    voidedAt: s.voidedAt ? utc(s.voidedAt) : null,
    voidReason: s.voidReason,
  }
}

/** Everything the templates print, worked out from the report input: words, units, verdicts, references. */
export function buildReportView(input: ReportInput): ReportView {
  const { run, project, equipment } = input
  const definition = run.definition
  const system: UnitSystem = run.unitSystem ?? project.unitSystem
  const tz = project.timeZone
  const fields = new Map<string, { field: ChecklistField; step: ChecklistStep; section: ChecklistSection }>()
  for (const section of definition.sections) for (const step of section.steps) for (const field of step.fields) fields.set(field.id, { field, step, section })

  const findingRefs = new Map(run.findings.map((f, i) => [f.id, `F${i + 1}`]))
  const images = run.attachments.filter((a) => a.mimeType.startsWith('image/') && safeImage(input.photoDataUrls[a.id]))
  const photoRefs = new Map(images.map((a, i) => [a.id, `Photo ${i + 1}`]))
  const count = countRunRecord(run)
  const ctx: Context = { input, count, system, fields, findingRefs, photoRefs }

  const allSections: SectionView[] = definition.sections.map((section) => ({
    id: section.id,
    title: section.title,
    steps: section.steps.map((step) => {
      const state = run.steps[step.id]
      const stepDisposition = state ? (state.disposition ?? (state.notApplicable ? { kind: 'not_applicable' as const, reason: state.naReason, by: null, reference: null, witnessed: null, reportNumber: null, dueDate: null } : null)) : null
      const fieldRows = rows(ctx, step.fields.map((f) => f.id))
      // Reasons that repeat are printed once for the step, not on every row.
      let naReason = stepDisposition ? describeDisposition(stepDisposition) : null
      let naTag = stepDisposition ? DISPOSITION_WORDS[stepDisposition.kind].count : null
      const own = fieldRows.filter((r) => r.naReason)
      if (!stepDisposition && own.length > 1 && own.every((r) => r.naReason === own[0].naReason)) {
        naReason = own[0].naReason
        own.forEach((r) => (r.naReason = null))
        const first = step.fields.find((f) => ctx.count.results.get(f.id)?.dispositionFrom === 'field')
        const kind = first ? ctx.count.results.get(first.id)?.disposition?.kind : undefined
        naTag = kind && own.length === fieldRows.length ? DISPOSITION_WORDS[kind].count : null
      }
      return {
        id: step.id,
        title: step.title,
        fields: fieldRows,
        note: state?.note ?? '',
        notApplicable: stepDisposition !== null,
        naReason,
        naTag,
        cautions: step.cautions ?? [],
      }
    }),
  }))

  const problems: ProblemView[] = []
  const missing: ProblemView[] = []
  const counted: Verdict[] = []
  for (const section of allSections) {
    for (const step of section.steps) {
      for (const row of step.fields) {
        const result = count.results.get(row.id) as CheckResult
        const outcome = result.outcome
        if (outcome === 'pass' || outcome === 'marginal' || outcome === 'fail' || outcome === 'incomplete') counted.push(outcome)
        if (!row.verdict) continue
        const problem = { where: `${section.title} › ${step.title}`, label: row.label, verdict: row.verdict, message: row.message, findingRefs: row.findingRefs, justification: row.justification }
        if (outcome === 'fail' || outcome === 'marginal') problems.push(problem)
        else if (outcome === 'incomplete') missing.push(problem)
      }
    }
  }
  problems.sort((a, b) => (a.verdict.key === b.verdict.key ? 0 : a.verdict.key === 'fail' ? -1 : 1))

  const p = count.totals
  const counts: ReportView['counts'] = [
    { verdict: verdictView('pass'), word: 'Pass', count: p.pass },
    { verdict: verdictView('marginal'), word: 'Marginal', count: p.marginal },
    { verdict: verdictView('fail'), word: 'Fail', count: p.fail },
    { verdict: verdictView('incomplete'), word: 'Incomplete', count: p.incomplete },
    { verdict: null, word: 'Recorded', count: p.recorded },
    ...(
      [
        ['not_applicable', p.notApplicable],
        ['by_others', p.byOthers],
        ['verified_earlier', p.verifiedEarlier],
        ['deferred', p.deferred],
        ['not_done', p.notDone],
      ] as const
    )
      .filter(([, n]) => n > 0)
      .map(([kind, n]) => ({ verdict: null, word: DISPOSITION_WORDS[kind].count, count: n })),
  ]

  const findings: FindingView[] = run.findings.map((f) => ({
    ref: findingRefs.get(f.id) as string,
    severity: SEVERITY_WORDS[f.severity] ?? f.severity,
    status: f.status === 'open' ? 'Open' : 'Resolved',
    open: f.status === 'open',
    description: f.description,
    where: whereOf(ctx, f.stepId, f.fieldId),
    raised: `${f.createdByName ?? 'Unknown'}, ${dateTimeIn(f.createdAt, tz)}`,
    resolution: f.resolution,
    resolved: f.resolvedAt ? `${f.resolvedByName ?? 'Unknown'}, ${dateTimeIn(f.resolvedAt, tz)}` : null,
    photoRefs: f.attachmentIds.map((id) => photoRefs.get(id)).filter((r): r is string => Boolean(r)),
  }))

  const photos: PhotoView[] = images.map((a) => {
    const finding = a.findingId ? findingRefs.get(a.findingId) : undefined
    return {
      ref: photoRefs.get(a.id) as string,
      dataUrl: input.photoDataUrls[a.id],
      caption: whereOf(ctx, a.stepId, a.fieldId),
      detail: [finding ? `Finding ${finding}` : null, a.originalName, dateTimeIn(a.createdAt, tz)].filter(Boolean).join(' · '),
    }
  })
  const otherAttachments = run.attachments
    .filter((a) => !photoRefs.has(a.id))
    .map((a) => ({ name: a.originalName, where: whereOf(ctx, a.stepId, a.fieldId) }))

  // Every exception with its follow-up (the acceptor acknowledged each one), then the marginal results that were justified.
  const exceptions = exceptionsOf(run, count)
  const exceptionViews: ExceptionView[] = exceptions.map((e) => exceptionView(e, findingRefs))
  const recommendations: string[] = exceptionViews.map((e) => `${e.kindWord}${e.severity ? ` (${e.severity.toLowerCase()})` : ''} — ${e.where}: ${e.detail}. ${e.followUp}${e.findingRefs.length ? ` (finding ${e.findingRefs.join(', ')})` : ''}`)
  for (const pr of problems) {
    if (pr.verdict.key === 'marginal' && !exceptions.some((e) => e.fieldId && pr.label === fields.get(e.fieldId)?.field.label)) recommendations.push(`Watch ${pr.label.toLowerCase()}: ${pr.message} (justified: ${pr.justification ?? 'resolved finding'}).`)
  }
  // The starter template's maintenance handover is printed with the recommendations rather than in the record.
  const handoverSection = allSections.find((s) => s.id === HANDOVER_SECTION)
  const handoverTasks = handoverSection ? handoverSection.steps.flatMap((s) => s.fields) : []
  const handoverNotes = handoverSection ? handoverSection.steps.map((s) => s.note).filter(Boolean) : []
  const sections = allSections.filter((s) => s.id !== HANDOVER_SECTION)
  recommendations.push('Keep this report with the daily logs as the baseline: compare approaches, efficiency and oil pressure against it.')

  const signatures = input.signatures.map(signatureView)
  const latest = (meaning: SignatureRecord['meaning']) => [...input.signatures].reverse().find((s) => s.meaning === meaning && !s.voided)
  const performed = latest('performed_by')
  const accepted = latest('accepted_by')
  const lastReadingAt = Object.values(run.readings).reduce<string | null>((acc, r) => (r.updatedAt && (!acc || r.updatedAt > acc) ? r.updatedAt : acc), null)

  const ramp = rampView(ctx)
  const kindLabel = isEquipmentKind(equipment.kind) ? EQUIPMENT_KIND_LABELS[equipment.kind] : equipment.kind
  const refrigerant = equipment.refrigerant ?? (typeof equipment.designPoint.refrigerant === 'string' ? equipment.designPoint.refrigerant : null)
  const nameplate = [
    { label: 'Manufacturer', value: equipment.manufacturer },
    { label: 'Model', value: equipment.model },
    { label: 'Serial number', value: equipment.serialNumber },
    { label: 'Year built', value: equipment.yearBuilt === null ? '—' : String(equipment.yearBuilt) },
    ...(refrigerant ? [{ label: 'Refrigerant', value: refrigerant }] : []),
  ]
  for (const key of ['capacity', 'voltage', 'fullLoadAmps'] as const) {
    const stored = equipment.designPoint[key] as { value: number; unit: string } | undefined
    if (!stored || !isDesignPointKey(key)) continue
    const kind = DESIGN_POINT_QUANTITIES[key]
    const unit = displayUnit(kind, system)
    nameplate.push({ label: key === 'capacity' ? 'Design capacity' : key === 'voltage' ? 'Rated voltage' : 'Full-load amps', value: formatQuantity(fromCanonical(stored.value, unit, kind), unit, kind) })
  }

  return {
    reportNumber: input.reportNumber,
    organizationName: input.organizationName,
    title: definition.title,
    paper: input.paper,
    project: { name: project.name, code: project.code, siteName: project.siteName, siteAddress: project.siteAddress, timeZone: tz, unitSystem: system === 'IP' ? 'I-P (inch-pound)' : 'SI (metric)' },
    equipment: { tag: equipment.tag, kindLabel, location: equipment.location, nameplate },
    run: {
      id: run.id,
      template: `${run.templateName}, version ${run.templateVersionNumber}`,
      state: STATE_WORDS[run.state] ?? run.state,
      startedAt: dateTimeIn(run.startedAt, tz),
      lastReadingAt: dateTimeIn(lastReadingAt, tz),
      acceptedAt: accepted ? accepted.signedAtLocal || dateTimeIn(accepted.signedAtUtc, tz) : null,
      performedBy: performed ? performed.printedName : run.startedByName,
      acceptedBy: accepted ? accepted.printedName : null,
    },
    generatedAt: `${utc(input.generatedAtUtc)} (${dateTimeIn(input.generatedAtUtc, tz)})`,
    overall: verdictView(worstVerdict(counted)),
    counts,
    totalChecks: p.checks,
    judgedChecks: p.judged,
    supersedes: input.supersedes ?? null,
    totalsLine: describeTotalsLine(p),
    acceptance: run.state === 'accepted' ? acceptanceWords(exceptions.length) : null,
    exceptions: exceptionViews,
    byOthers: byOthersOf(definition, count),
    performerStatement: performerStatement(byOthersOf(definition, count)),
    acceptedWithOpenFindings: run.state === 'accepted' && run.findings.some((f) => f.status === 'open'),
    problems,
    missing,
    openFindingCount: run.findings.filter((f) => f.status === 'open').length,
    designRows: designRows(ctx),
    testConditions: testConditions(ctx),
    ramp,
    timings: timingRows(ctx, ramp),
    electrical: rows(ctx, ['voltsAB', 'voltsBC', 'voltsCA', 'voltageUnbalance', 'ampsA', 'ampsB', 'ampsC', 'currentUnbalance', 'inputKw']),
    waterSide: [
      { title: 'Evaporator', rows: rows(ctx, ['chwEntering', 'chwLeaving', 'chwFlow', 'chwPressureDrop', 'evapPressure', 'evapSatTemp', 'evapApproach']) },
      { title: 'Condenser', rows: rows(ctx, ['cwEntering', 'cwLeaving', 'cwFlow', 'cwPressureDrop', 'condPressure', 'condSatTemp', 'condApproach']) },
      { title: 'Capacity, efficiency and heat balance', rows: rows(ctx, ['capacity', 'condenserHeat', 'specificPower', 'heatBalance', 'chwSetpoint']) },
    ].filter((g) => g.rows.length > 0),
    sections,
    findings,
    photos,
    otherAttachments,
    recommendations,
    handoverTasks,
    handoverNotes,
    cautions: collectCautions(definition.sections),
    deferStatement: DEFER,
    signatures: signatures.filter((x) => !x.voided),
    voidedSignatures: signatures.filter((x) => x.voided),
    verification: { contentSha256: input.contentSha256, verifyUrl: input.verifyUrl, generatedAtUtc: utc(input.generatedAtUtc) },
  }
}
