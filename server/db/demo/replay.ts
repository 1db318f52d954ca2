import type { Disposition } from '@shared/record'
import { randomUUID } from 'node:crypto'
import type { DataSource, EntityManager } from 'typeorm'
import type { ChecklistDefinition } from '@shared/schemas/checklist'
import type { FieldEntry } from '@shared/schemas/reading'
import { findingCreateSchema, findingUpdateSchema, readingChangeSchema, signSchema, stepChangeSchema } from '@shared/schemas/run'
import type { SessionUser } from '@shared/types/api'
import type { RunDetail } from '@shared/types/run'
import { OutboundMail } from '../../entities'
import type { MailService, QueuedMail } from '../../mail/mail.service'
import type { StorageService } from '../../storage/storage'
import { fieldPlaces } from '@shared/record'
import { createServices } from '../../services'
import type { RunPlan } from './history'
import { chillerRun, pumpRun, type DesignValues, type Rng } from './readings'

/**
 * The clock the demo's services read: set to the invented moment of each action and moved on as a technician would
 * take time between readings. Only the loader's own service instances see it.
 */
export class DemoClock {
  private at = new Date(0)
  readonly now = () => new Date(this.at)
  set(date: Date) {
    this.at = new Date(date)
  }
  advance(seconds: number) {
    this.at = new Date(this.at.getTime() + Math.round(seconds * 1000))
  }
  atLeast(date: Date) {
    if (date > this.at) this.at = new Date(date)
  }
}

/**
 * A DataSource whose every query runs on the loader's one transaction. The services call `db.transaction(...)` as
 * always; on this connection TypeORM nests those as savepoints, so the whole demo commits or rolls back as one step.
 */
export function transactionScoped(tx: EntityManager): DataSource {
  // The services run some reads side by side (Promise.all); on a pool those take separate connections, here they
  // share one, so they are queued one after another instead of being handed to the pg client at once.
  const runner = tx.queryRunner!
  const query = runner.query.bind(runner) as (...args: unknown[]) => Promise<unknown>
  let last: Promise<unknown> = Promise.resolve()
  runner.query = ((...args: unknown[]) => {
    const next = last.then(() => query(...args))
    last = next.catch(() => undefined)
    return next
  }) as typeof runner.query
  // A service that takes a connection of its own for a few statements (a save) is handed the transaction's, kept open.
  const ownRunner = { manager: tx, release: async () => undefined }
  return new Proxy(tx, {
    get: (target, prop, receiver) => (prop === 'manager' ? target : prop === 'createQueryRunner' ? () => ownRunner : Reflect.get(target, prop, receiver)),
  }) as unknown as DataSource
}

/**
 * Mail of the invented past: what the product queued then (awaiting-acceptance notices) is recorded as sent at that
 * time, so the Outbox shows the history and nothing old goes out when the product starts.
 */
function historicMail(clock: DemoClock): MailService {
  return {
    async queue(manager: EntityManager, mail: QueuedMail) {
      const to = [...new Set(mail.to.map((a) => a.trim().toLowerCase()).filter(Boolean))]
      if (!to.length) return
      const created = clock.now()
      await manager.getRepository(OutboundMail).insert({
        kind: mail.kind,
        runId: mail.runId ?? null,
        to,
        subject: mail.subject,
        text: mail.text,
        attachments: mail.attachments ?? [],
        status: 'sent',
        attempts: 1,
        nextAttemptAt: created,
        sentAt: new Date(created.getTime() + 12_000),
        createdAt: created,
      })
    },
  } as unknown as MailService
}

const noFiles = new Proxy({}, {
  get: () => () => {
    throw new Error('the demo history stores no files')
  },
}) as StorageService

export function demoServices(db: DataSource, clock: DemoClock) {
  const { projects, runs, findings, signing, reports } = createServices({
    db,
    publicUrl: 'http://localhost:3000',
    storage: noFiles,
    mail: historicMail(clock),
    clock: clock.now,
    renderer: () => {
      throw new Error('demo reports are rendered by the report queue when the product starts')
    },
  })
  return { projects, runs, findings, signing, reports }
}
export type DemoServices = ReturnType<typeof demoServices>

export interface Actor {
  user: SessionUser
  password: string
  signature: string
}

/** Steps a re-test repeats: the running checks, and whatever failed, was marginal or had a finding the first time. */
const RETEST_KEEPS: Record<string, string[]> = {
  centrifugal_chiller: ['prestart-safety', 'water-flow', 'test-conditions', 'motor-supply', 'oil-running', 'evaporator', 'condenser', 'performance', 'setpoint'],
  pump: ['pump-safety', 'alignment-final', 'hydraulic', 'pump-electrical', 'mechanical'],
}

/** Local start of each section of the day: safety tests after lunch, training at the end of the day. */
const SECTION_HOURS: Record<string, number> = { prestart: 7.75, 'first-start': 9.75, running: 10.5, 'safety-tests': 13, training: 14.5, handover: 15.25, alignment: 8.5, rotation: 9.5, 'pump-handover': 11 }

export interface FilledRun {
  runId: string
  /** Steps that held a fail, a marginal or a finding (a re-test repeats them). */
  troubledSteps: Set<string>
  performerSignedAt: Date
}

/**
 * One run as a technician fills it: started from the latest published version, every step in order, readings with
 * pauses between them, notes, findings (some put right on the day), then the review and the performer's signature.
 */
export async function fillRun(
  s: DemoServices,
  clock: DemoClock,
  r: Rng,
  plan: RunPlan,
  ctx: {
    tech: Actor
    equipment: { id: string; kind: string; designPoint: DesignValues }
    templateId: string
    unitSystem: 'IP' | 'SI'
    dayStart: (hours: number) => Date
    attendees: string
    retest?: { of: FilledRun; reportNumber: string; acceptedOn: string }
  },
): Promise<FilledRun> {
  clock.atLeast(ctx.dayStart(ctx.equipment.kind === 'pump' ? 8 : 7.5))
  const run: RunDetail = await s.runs.start(ctx.tech.user, ctx.equipment.id, ctx.templateId)
  const definition = run.definition as ChecklistDefinition
  const places = fieldPlaces(definition)
  const generated =
    ctx.equipment.kind === 'pump'
      ? pumpRun(definition, ctx.unitSystem, ctx.equipment.designPoint, r, plan.pump ?? {})
      : chillerRun(definition, ctx.unitSystem, ctx.equipment.designPoint, r, plan.chiller ?? {}, { technician: ctx.tech.user.displayName, attendees: ctx.attendees }, run.siteBarometricKpa)
  const entries = new Map<string, FieldEntry>(generated.entries.map((e) => [e.fieldId, e.entry]))
  for (const [fieldId, entry] of Object.entries(plan.set ?? {})) entries.set(fieldId, entry)
  const versions = new Map<string, number>()
  const stepVersions = new Map<string, number>()

  const setReading = async (fieldId: string, entry: FieldEntry | null, justification?: string) => {
    const input = await readingChangeSchema.validate({ changeId: randomUUID(), baseVersion: versions.get(fieldId) ?? 0, entry, ...(justification ? { justification } : {}) })
    await s.runs.setReading(ctx.tech.user, run.id, fieldId, input)
    versions.set(fieldId, (versions.get(fieldId) ?? 0) + 1)
  }
  const setStep = async (stepId: string, change: { note?: string; disposition?: Disposition }) => {
    const input = await stepChangeSchema.validate({ changeId: randomUUID(), baseVersion: stepVersions.get(stepId) ?? 0, ...change })
    await s.runs.setStep(ctx.tech.user, run.id, stepId, input)
    stepVersions.set(stepId, (stepVersions.get(stepId) ?? 0) + 1)
  }

  const blank = { reason: null, by: null, reference: null, witnessed: null, reportNumber: null, dueDate: null }
  const dateIn = (days: number) => new Date(ctx.dayStart(12).getTime() + days * 86_400_000).toISOString().slice(0, 10)
  // Why a step has no readings of its own on this run, if it has none: carried over, done by others, deferred, not done.
  const dispositionFor = (stepId: string): Disposition | null => {
    if (ctx.retest) {
      const keeps = RETEST_KEEPS[ctx.equipment.kind]
      if (keeps.includes(stepId) || ctx.retest.of.troubledSteps.has(stepId) || plan.notes?.[stepId]) return null
      return { ...blank, kind: 'verified_earlier', reportNumber: ctx.retest.reportNumber, reason: `Checked in the start-up accepted on ${ctx.retest.acceptedOn} and unchanged since; this re-test repeats the running checks and what needed attention.` }
    }
    if ((stepId === 'prelube' || stepId === 'soft-start') && !plan.chiller?.startSequence) {
      const n = 100 + (plan.id.length * 37 + stepId.length) % 800
      return { ...blank, kind: 'by_others', by: 'Field service engineer of the chiller manufacturer', reference: `Manufacturer's start-up record FS-${n}`, witnessed: plan.id.length % 2 === 0, reason: 'First start made before this run; their start-sequence record is filed with the closeout documents.' }
    }
    const deferred = plan.defer?.[stepId]
    if (deferred) return { ...blank, kind: 'deferred', reason: deferred.reason, dueDate: dateIn(deferred.dueInDays) }
    const notDone = plan.notDone?.[stepId]
    if (notDone) return { ...blank, kind: 'not_done', reason: notDone }
    return null
  }

  const troubled = new Set<string>()
  for (const section of definition.sections) {
    const hour = SECTION_HOURS[section.id]
    if (hour !== undefined) clock.atLeast(ctx.dayStart(hour + r.between(0, 0.2)))
    for (const step of section.steps) {
      clock.advance(r.between(60, 240))
      const disposition = dispositionFor(step.id)
      if (disposition) {
        await setStep(step.id, { disposition })
        continue
      }
      for (const field of step.fields) {
        const entry = entries.get(field.id)
        const justification = plan.justify?.[field.id]
        if (entry === undefined && !(field.computed && justification)) continue
        clock.advance(r.between(20, 80))
        await setReading(field.id, entry ?? null, justification)
      }
      if (plan.notes?.[step.id]) {
        clock.advance(r.between(30, 90))
        await setStep(step.id, { note: plan.notes[step.id] })
      }
      for (const f of (plan.findings ?? []).filter((x) => x.stepId === step.id)) {
        clock.advance(r.between(60, 180))
        const created = await s.findings.create(ctx.tech.user, run.id, await findingCreateSchema.validate({ stepId: f.stepId, fieldId: f.fieldId ?? null, severity: f.severity, description: f.description }))
        troubled.add(step.id)
        if (f.resolve) {
          clock.advance(r.between(25, 50) * 60)
          for (const [fieldId, entry] of Object.entries(f.resolve.entries(entries))) {
            clock.advance(r.between(20, 60))
            await setReading(fieldId, entry)
          }
          clock.advance(r.between(60, 120))
          await s.findings.update(ctx.tech.user, run.id, created.id, await findingUpdateSchema.validate({ status: 'resolved', resolution: f.resolve.resolution, version: created.version ?? 1 }))
        }
      }
    }
  }

  const review = await s.findings.review(ctx.tech.user, run.id)
  for (const p of review.problems) troubled.add(p.stepId)
  if (!review.canSign) throw new Error(`demo run ${plan.id} cannot be signed: ${review.blockers.join('; ')}`)
  clock.advance(r.between(10, 25) * 60)
  await s.signing.sign(ctx.tech.user, run.id, await signSchema.validate({ meaning: 'performed_by', password: ctx.tech.password, signatureImage: ctx.tech.signature, snapshotSha256: review.snapshotSha256 }))
  return { runId: run.id, troubledSteps: troubled, performerSignedAt: clock.now() }
}

/** The owner's representative reviews the submitted run and signs acceptance; the report is requested on acceptance. */
export async function acceptRun(s: DemoServices, rep: Actor, runId: string): Promise<void> {
  const review = await s.findings.review(rep.user, runId)
  // Accepted with exceptions: the representative acknowledges each one, as the acceptance dialog asks.
  const acknowledgedExceptions = review.exceptions.map((e) => e.id)
  await s.signing.sign(rep.user, runId, await signSchema.validate({ meaning: 'accepted_by', password: rep.password, signatureImage: rep.signature, snapshotSha256: review.snapshotSha256, acknowledgedExceptions }))
}
