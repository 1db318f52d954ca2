import { isDeepStrictEqual } from 'node:util'
import { DataSource, In, type EntityManager } from 'typeorm'
import * as yup from 'yup'
import type { ChecklistDefinition, ChecklistField } from '@shared/schemas/checklist'
import { entrySchemaFor, type FieldEntry } from '@shared/schemas/reading'
import { evaluateChecklist, physicalBoundsProblem, type FieldEvaluation } from '@shared/rules'
import type { AnyDesignPoint } from '@shared/schemas/design-point'
import type { ReadingChangeInput, StepChangeInput } from '@shared/schemas/run'
import type { SessionUser } from '@shared/types/api'
import {
  EDITABLE_RUN_STATES,
  type ReadingSaved,
  type RunDetail,
  type RunProgress,
  type RunReading,
  type RunState,
  type RunStepState,
  type RunSummary,
} from '@shared/types/run'
import { AppError } from '../errors/app-error'
import { ChecklistTemplate, Equipment, Project, Reading, Run, RunChange, RunStep, Signature, TemplateVersion, User } from '../entities'
import { fieldErrors } from '../middleware/validate'
import { recordAudit } from './audit.service'
import { signatureRecord } from './signing.service'
import { systemClock, type Clock } from './clock'
import type { FindingService } from './finding.service'
import type { ProjectService } from './project.service'

/** Everything a run is judged with: the pinned definition, the equipment's design point and the project's units. */
export interface RunContext {
  run: Run
  project: Project
  equipment: Equipment
  version: TemplateVersion
  template: ChecklistTemplate
  definition: ChecklistDefinition
}

type FieldPlace = { field: ChecklistField; stepId: string; sectionId: string }

export function fieldPlaces(definition: ChecklistDefinition): Map<string, FieldPlace> {
  const places = new Map<string, FieldPlace>()
  for (const section of definition.sections) {
    for (const step of section.steps) for (const field of step.fields) places.set(field.id, { field, stepId: step.id, sectionId: section.id })
  }
  return places
}

/** Evaluates every field of the definition from the stored entries (fields marked not applicable count as empty). */
export function evaluateAll(ctx: Pick<RunContext, 'definition' | 'equipment' | 'project'>, readings: Reading[], naSteps: Set<string>): Record<string, FieldEvaluation> {
  const places = fieldPlaces(ctx.definition)
  const entries: Record<string, FieldEntry | null> = {}
  for (const r of readings) {
    const stepNa = naSteps.has(places.get(r.fieldId)?.stepId ?? '')
    entries[r.fieldId] = r.notApplicable || stepNa ? null : (r.entry as FieldEntry | null)
  }
  return evaluateChecklist(ctx.definition, {
    readings: entries,
    designPoint: ctx.equipment.designPoint as unknown as AnyDesignPoint,
    unitSystem: ctx.project.unitSystem,
  })
}

/** Counts by verdict over the fields that count: not-applicable ones (field or step) apart. */
export function progressOf(definition: ChecklistDefinition, readings: Reading[], naSteps: Set<string>): RunProgress {
  const places = fieldPlaces(definition)
  const p: RunProgress = { required: 0, answered: 0, pass: 0, marginal: 0, fail: 0, incomplete: 0, notApplicable: 0 }
  for (const r of readings) {
    const place = places.get(r.fieldId)
    if (!place) continue
    if (r.notApplicable || naSteps.has(place.stepId)) {
      p.notApplicable += 1
      continue
    }
    const required = place.field.required !== false
    if (r.verdict === 'incomplete') {
      if (required) {
        p.required += 1
        p.incomplete += 1
      }
      continue
    }
    if (required) {
      p.required += 1
      p.answered += 1
    }
    p[r.verdict as 'pass' | 'marginal' | 'fail'] += 1
  }
  return p
}

/** Runs: started on an equipment item from a pinned template version, filled field by field, judged by the shared rules. */
export class RunService {
  constructor(
    private readonly db: DataSource,
    private readonly projects: ProjectService,
    private readonly clock: Clock = systemClock,
  ) {}

  findings?: FindingService

  private async names(ids: (string | null)[]): Promise<Map<string, string>> {
    const wanted = [...new Set(ids.filter((x): x is string => Boolean(x)))]
    if (!wanted.length) return new Map()
    const users = await this.db.getRepository(User).findBy({ id: In(wanted) })
    return new Map(users.map((u) => [u.id, u.displayName]))
  }

  /** Whether `user` may read run data of this state (contractors see only accepted records). */
  private mayRead(user: SessionUser, state: RunState): boolean {
    return user.role !== 'contractor' || state === 'accepted'
  }

  /** Loads a run and what it is judged with; 404 when the user may not see it. `lock` serialises changes to one run. */
  async context(user: SessionUser, runId: string, manager: EntityManager = this.db.manager, lock = false): Promise<RunContext> {
    const run = await manager.getRepository(Run).findOne({ where: { id: runId }, ...(lock ? { lock: { mode: 'pessimistic_write' as const } } : {}) })
    if (!run || !(await this.projects.canAccess(user, run.projectId)) || !this.mayRead(user, run.state)) throw AppError.notFound('Run')
    const [project, equipment, version] = await Promise.all([
      manager.getRepository(Project).findOneByOrFail({ id: run.projectId }),
      manager.getRepository(Equipment).findOneByOrFail({ id: run.equipmentId }),
      manager.getRepository(TemplateVersion).findOneByOrFail({ id: run.templateVersionId }),
    ])
    const template = await manager.getRepository(ChecklistTemplate).findOneByOrFail({ id: version.templateId })
    return { run, project, equipment, version, template, definition: version.definition as unknown as ChecklistDefinition }
  }

  /** Only technicians on the run's project change it, and only while it is in progress or returned. */
  private assertCanEdit(user: SessionUser, ctx: RunContext) {
    if (user.role !== 'technician') throw AppError.forbidden('Only a commissioning technician on this project can change a run')
    if (!EDITABLE_RUN_STATES.includes(ctx.run.state)) {
      throw new AppError('run_locked', `This run is ${ctx.run.state.replace('_', ' ')} and can no longer be changed`, 409)
    }
  }

  async start(user: SessionUser, equipmentId: string, templateId: string): Promise<RunDetail> {
    if (user.role !== 'technician') throw AppError.forbidden('Only a commissioning technician starts a run')
    const runId = await this.db.transaction(async (tx) => {
      const equipment = await tx.getRepository(Equipment).findOneBy({ id: equipmentId })
      if (!equipment || !(await this.projects.canAccess(user, equipment.projectId))) throw AppError.notFound('Equipment')
      const project = await tx.getRepository(Project).findOneByOrFail({ id: equipment.projectId })
      if (project.closedAt) {
        throw new AppError('project_closed', `Project ${project.code} is closed; an admin reopens it before a new run starts (its reports stay readable)`, 409)
      }
      const template = await tx.getRepository(ChecklistTemplate).findOneBy({ id: templateId, organizationId: project.organizationId })
      if (!template) throw new AppError('not_found', 'Template was not found', 404, { templateId: 'No such template' })
      if (template.equipmentKind !== equipment.kind) {
        throw new AppError('wrong_kind', `${template.name} is for ${template.equipmentKind.replace('_', ' ')} equipment, but ${equipment.tag} is a ${equipment.kind.replace('_', ' ')}`, 409, { templateId: 'This template is for another kind of equipment' })
      }
      const version = await tx.getRepository(TemplateVersion).findOne({ where: { templateId, status: 'published' }, order: { number: 'DESC' } })
      if (!version) throw new AppError('not_published', `${template.name} has no published version yet`, 409, { templateId: 'No published version' })
      const now = this.clock()
      const run = await tx.getRepository(Run).save({ projectId: project.id, equipmentId, templateVersionId: version.id, state: 'in_progress' as const, startedBy: user.id, startedAt: now, updatedAt: now })
      const definition = version.definition as unknown as ChecklistDefinition
      const blank = [...fieldPlaces(definition).keys()].map((fieldId) => ({ runId: run.id, fieldId, entry: null } as Reading))
      const evaluations = evaluateAll({ definition, equipment, project }, blank, new Set())
      await tx.getRepository(Reading).save(
        blank.map((r) =>
          tx.getRepository(Reading).create({
            runId: r.runId,
            fieldId: r.fieldId,
            entry: null,
            evaluation: evaluations[r.fieldId],
            verdict: evaluations[r.fieldId].verdict,
            canonicalValue: evaluations[r.fieldId].canonical?.value ?? null,
            version: 0,
          }),
        ),
      )
      const steps = definition.sections.flatMap((s) => s.steps.map((st) => ({ runId: run.id, stepId: st.id })))
      await tx.getRepository(RunStep).insert(steps)
      await recordAudit(tx, {
        actorId: user.id,
        action: 'run.start',
        entityType: 'run',
        entityId: run.id,
        projectId: project.id,
        after: { equipment: equipment.tag, template: template.key, version: version.number },
        occurredAt: now,
      })
      return run.id
    })
    return this.detail(user, runId)
  }

  private async summaries(runs: Run[]): Promise<RunSummary[]> {
    if (!runs.length) return []
    const ids = runs.map((r) => r.id)
    const [projects, equipment, versions, readings, steps, openFindings] = await Promise.all([
      this.db.getRepository(Project).findBy({ id: In([...new Set(runs.map((r) => r.projectId))]) }),
      this.db.getRepository(Equipment).findBy({ id: In([...new Set(runs.map((r) => r.equipmentId))]) }),
      this.db.getRepository(TemplateVersion).findBy({ id: In([...new Set(runs.map((r) => r.templateVersionId))]) }),
      this.db.getRepository(Reading).find({ where: { runId: In(ids) }, select: { runId: true, fieldId: true, verdict: true, notApplicable: true } }),
      this.db.getRepository(RunStep).find({ where: { runId: In(ids), notApplicable: true }, select: { runId: true, stepId: true } }),
      this.db.query(`SELECT run_id, count(*)::int AS n FROM finding WHERE run_id = ANY($1::uuid[]) AND status = 'open' GROUP BY run_id`, [ids]) as Promise<{ run_id: string; n: number }[]>,
    ])
    const templates = await this.db.getRepository(ChecklistTemplate).findBy({ id: In([...new Set(versions.map((v) => v.templateId))]) })
    const names = await this.names(runs.map((r) => r.startedBy))
    const byId = <T extends { id: string }>(list: T[]) => new Map(list.map((x) => [x.id, x]))
    const [pMap, eMap, vMap, tMap] = [byId(projects), byId(equipment), byId(versions), byId(templates)]
    return runs.map((run) => {
      const version = vMap.get(run.templateVersionId)!
      const definition = version.definition as unknown as ChecklistDefinition
      const naSteps = new Set(steps.filter((s) => s.runId === run.id).map((s) => s.stepId))
      const project = pMap.get(run.projectId)!
      const eq = eMap.get(run.equipmentId)!
      return {
        id: run.id,
        projectId: run.projectId,
        projectCode: project.code,
        projectName: project.name,
        equipmentId: run.equipmentId,
        equipmentTag: eq.tag,
        equipmentKind: eq.kind,
        templateId: version.templateId,
        templateName: tMap.get(version.templateId)!.name,
        templateVersionNumber: version.number,
        state: run.state,
        version: run.version,
        startedAt: run.startedAt.toISOString(),
        startedByName: run.startedBy ? (names.get(run.startedBy) ?? null) : null,
        updatedAt: run.updatedAt.toISOString(),
        progress: progressOf(definition, readings.filter((r) => r.runId === run.id), naSteps),
        openFindings: openFindings.find((f) => f.run_id === run.id)?.n ?? 0,
      }
    })
  }

  async list(user: SessionUser, query: { state?: RunState; projectId?: string; equipmentId?: string; mine?: boolean }): Promise<RunSummary[]> {
    const qb = this.db.getRepository(Run).createQueryBuilder('r').orderBy('r.updated_at', 'DESC').limit(500)
    if (user.role === 'admin') {
      qb.innerJoin(Project, 'p', 'p.id = r.project_id AND p.organization_id = (SELECT organization_id FROM app_user WHERE id = :uid)', { uid: user.id })
    } else {
      qb.innerJoin('project_member', 'pm', 'pm.project_id = r.project_id AND pm.user_id = :uid', { uid: user.id })
    }
    if (user.role === 'contractor') qb.andWhere(`r.state = 'accepted'`)
    if (query.state) qb.andWhere('r.state = :state', { state: query.state })
    if (query.projectId) qb.andWhere('r.project_id = :projectId', { projectId: query.projectId })
    if (query.equipmentId) qb.andWhere('r.equipment_id = :equipmentId', { equipmentId: query.equipmentId })
    if (query.mine) {
      qb.andWhere('(r.started_by = :uid OR EXISTS (SELECT 1 FROM run_change c WHERE c.run_id = r.id AND c.user_id = :uid))', { uid: user.id })
    }
    return this.summaries(await qb.getMany())
  }

  private async readingViews(readings: Reading[]): Promise<Record<string, RunReading>> {
    const names = await this.names(readings.map((r) => r.updatedBy))
    return Object.fromEntries(
      readings.map((r) => [
        r.fieldId,
        {
          fieldId: r.fieldId,
          entry: r.entry as FieldEntry | null,
          notApplicable: r.notApplicable,
          naReason: r.naReason,
          justification: r.justification,
          evaluation: r.evaluation,
          version: r.version,
          updatedAt: r.updatedAt?.toISOString() ?? null,
          updatedByName: r.updatedBy ? (names.get(r.updatedBy) ?? null) : null,
        } satisfies RunReading,
      ]),
    )
  }

  private async stepView(step: RunStep): Promise<RunStepState> {
    const names = await this.names([step.updatedBy])
    return {
      stepId: step.stepId,
      note: step.note,
      notApplicable: step.notApplicable,
      naReason: step.naReason,
      version: step.version,
      updatedAt: step.updatedAt?.toISOString() ?? null,
      updatedByName: step.updatedBy ? (names.get(step.updatedBy) ?? null) : null,
    }
  }

  async detail(user: SessionUser, runId: string): Promise<RunDetail> {
    return this.detailOf(await this.context(user, runId))
  }

  /** The run as the report prints it, for server-side work that acts for nobody in particular (report rendering). */
  async detailForReport(runId: string): Promise<RunDetail> {
    const run = await this.db.getRepository(Run).findOneByOrFail({ id: runId })
    const manager = this.db.manager
    const [project, equipment, version] = await Promise.all([
      manager.getRepository(Project).findOneByOrFail({ id: run.projectId }),
      manager.getRepository(Equipment).findOneByOrFail({ id: run.equipmentId }),
      manager.getRepository(TemplateVersion).findOneByOrFail({ id: run.templateVersionId }),
    ])
    const template = await manager.getRepository(ChecklistTemplate).findOneByOrFail({ id: version.templateId })
    return this.detailOf({ run, project, equipment, version, template, definition: version.definition as unknown as ChecklistDefinition })
  }

  private async detailOf(ctx: RunContext): Promise<RunDetail> {
    const runId = ctx.run.id
    const [summary] = await this.summaries([ctx.run])
    const readings = await this.db.getRepository(Reading).findBy({ runId })
    const steps = await this.db.getRepository(RunStep).findBy({ runId })
    const stepViews = await Promise.all(steps.map((s) => this.stepView(s)))
    return {
      ...summary,
      unitSystem: ctx.project.unitSystem,
      definition: ctx.definition,
      designPoint: ctx.equipment.designPoint,
      readings: await this.readingViews(readings),
      steps: Object.fromEntries(stepViews.map((s) => [s.stepId, s])),
      findings: this.findings ? await this.findings.listViews(runId) : [],
      attachments: this.findings ? await this.findings.attachmentViews(runId) : [],
      signatures: (await this.db.getRepository(Signature).find({ where: { runId }, order: { signedAt: 'ASC' } })).map(signatureRecord),
    }
  }

  /** Saves one field's entry (or its not-applicable state), re-judges every field, and records the change. */
  async setReading(user: SessionUser, runId: string, fieldId: string, input: ReadingChangeInput): Promise<ReadingSaved> {
    const outcome = await this.db.transaction(async (tx) => {
      const ctx = await this.context(user, runId, tx, true)
      if (await tx.getRepository(RunChange).existsBy({ id: input.changeId })) return { duplicate: true }
      this.assertCanEdit(user, ctx)
      const place = fieldPlaces(ctx.definition).get(fieldId)
      if (!place) {
        throw new AppError('unknown_field', `There is no field ${fieldId} in version ${ctx.version.number} of ${ctx.template.name}`, 400, { [fieldId]: 'Not a field of this run’s checklist version' })
      }
      const { field } = place
      if (field.computed && input.entry !== null) {
        throw new AppError('computed_field', `${field.label} is computed from other readings and cannot be entered`, 400, { [fieldId]: 'Computed from other readings' })
      }
      let entry: FieldEntry | null = null
      if (input.entry !== null && input.entry !== undefined) {
        try {
          entry = (await entrySchemaFor(field).validate(input.entry, { abortEarly: false })) as FieldEntry
        } catch (err) {
          if (!(err instanceof yup.ValidationError)) throw err
          const fields = fieldErrors(err, 'entry')
          throw new AppError('invalid_reading', `${field.label}: ${Object.values(fields)[0]}`, 400, { [fieldId]: Object.values(fields)[0], ...fields })
        }
        const impossible = physicalBoundsProblem(field, entry)
        if (impossible) throw new AppError('invalid_reading', impossible, 400, { [fieldId]: impossible })
      }
      const repo = tx.getRepository(Reading)
      const current = await repo.findOneByOrFail({ runId, fieldId })
      const next = { entry: entry as Record<string, unknown> | null, notApplicable: input.notApplicable ?? false, naReason: input.notApplicable ? (input.naReason ?? null) : null, justification: input.justification ?? null }
      const unchanged = isDeepStrictEqual(
        { entry: current.entry, notApplicable: current.notApplicable, naReason: current.naReason, justification: current.justification },
        next,
      )
      if (current.version !== input.baseVersion && !unchanged) {
        const [view] = Object.values(await this.readingViews([current]))
        const who = view.updatedByName ?? 'Someone'
        const when = current.updatedAt ? ` at ${current.updatedAt.toISOString().slice(11, 16)} UTC` : ''
        throw new AppError(
          'reading_conflict',
          `${who} changed ${field.label} to ${current.evaluation.display?.text ?? describeEntry(current.entry)}${when}; keep theirs or save yours again`,
          409,
          { [fieldId]: `Changed by ${who}${when}` },
          { current: view },
        )
      }
      const before = { entry: current.entry, notApplicable: current.notApplicable, naReason: current.naReason, justification: current.justification, verdict: current.verdict }
      const now = this.clock()
      if (!unchanged) {
        Object.assign(current, next, { version: current.version + 1, updatedBy: user.id, updatedAt: now })
        await repo.save(current)
      }
      const readings = await repo.findBy({ runId })
      const naSteps = new Set((await tx.getRepository(RunStep).findBy({ runId, notApplicable: true })).map((s) => s.stepId))
      await this.rejudge(tx, ctx, readings, naSteps)
      await tx.getRepository(RunChange).insert({ id: input.changeId, runId, target: 'reading', targetId: fieldId, userId: user.id, appliedAt: now })
      if (!unchanged) {
        const saved = readings.find((r) => r.fieldId === fieldId)!
        await recordAudit(tx, {
          actorId: user.id,
          action: 'reading.set',
          entityType: 'reading',
          entityId: `${runId}/${fieldId}`,
          projectId: ctx.run.projectId,
          before,
          after: { entry: saved.entry, notApplicable: saved.notApplicable, naReason: saved.naReason, justification: saved.justification, verdict: saved.verdict },
          occurredAt: now,
        })
        await tx.query(`UPDATE run SET updated_at = $2 WHERE id = $1`, [runId, now])
      }
      return { duplicate: false }
    })
    const detail = await this.db.getRepository(Reading).findBy({ runId })
    const views = await this.readingViews(detail)
    const ctx = await this.context(user, runId)
    const naSteps = new Set((await this.db.getRepository(RunStep).findBy({ runId, notApplicable: true })).map((s) => s.stepId))
    return { reading: views[fieldId], readings: views, progress: progressOf(ctx.definition, detail, naSteps), duplicate: outcome.duplicate }
  }

  /** Re-evaluates every field and stores the verdicts that changed (computed fields follow their inputs). */
  private async rejudge(tx: EntityManager, ctx: RunContext, readings: Reading[], naSteps: Set<string>) {
    const evaluations = evaluateAll(ctx, readings, naSteps)
    for (const r of readings) {
      const evaluation = evaluations[r.fieldId]
      if (!evaluation || isDeepStrictEqual(evaluation, r.evaluation)) continue
      r.evaluation = evaluation
      r.verdict = evaluation.verdict
      r.canonicalValue = evaluation.canonical?.value ?? null
      await tx.getRepository(Reading).update({ runId: r.runId, fieldId: r.fieldId }, { evaluation, verdict: evaluation.verdict, canonicalValue: r.canonicalValue })
    }
  }

  async setStep(user: SessionUser, runId: string, stepId: string, input: StepChangeInput): Promise<RunStepState> {
    await this.db.transaction(async (tx) => {
      const ctx = await this.context(user, runId, tx, true)
      if (await tx.getRepository(RunChange).existsBy({ id: input.changeId })) return
      this.assertCanEdit(user, ctx)
      const repo = tx.getRepository(RunStep)
      const step = await repo.findOneBy({ runId, stepId })
      if (!step) throw new AppError('unknown_step', `There is no step ${stepId} in this run’s checklist`, 400, { [stepId]: 'Not a step of this run’s checklist version' })
      const next = { note: input.note ?? '', notApplicable: input.notApplicable ?? false, naReason: input.notApplicable ? (input.naReason ?? null) : null }
      const unchanged = isDeepStrictEqual({ note: step.note, notApplicable: step.notApplicable, naReason: step.naReason }, next)
      if (step.version !== input.baseVersion && !unchanged) {
        const view = await this.stepView(step)
        const who = view.updatedByName ?? 'Someone'
        throw new AppError('step_conflict', `${who} changed this step's note or applicability meanwhile; keep theirs or save yours again`, 409, { [stepId]: `Changed by ${who}` }, { current: view })
      }
      const now = this.clock()
      if (!unchanged) {
        const before = { note: step.note, notApplicable: step.notApplicable, naReason: step.naReason }
        Object.assign(step, next, { version: step.version + 1, updatedBy: user.id, updatedAt: now })
        await repo.save(step)
        if (before.notApplicable !== step.notApplicable) {
          const readings = await tx.getRepository(Reading).findBy({ runId })
          const naSteps = new Set((await repo.findBy({ runId, notApplicable: true })).map((s) => s.stepId))
          await this.rejudge(tx, ctx, readings, naSteps)
        }
        await recordAudit(tx, { actorId: user.id, action: 'step.set', entityType: 'run_step', entityId: `${runId}/${stepId}`, projectId: ctx.run.projectId, before, after: next, occurredAt: now })
        await tx.query(`UPDATE run SET updated_at = $2 WHERE id = $1`, [runId, now])
      }
      await tx.getRepository(RunChange).insert({ id: input.changeId, runId, target: 'step', targetId: stepId, userId: user.id, appliedAt: now })
    })
    const step = await this.db.getRepository(RunStep).findOneByOrFail({ runId, stepId })
    return this.stepView(step)
  }

  /** Audit events of a run, oldest first (who changed what, before → after). */
  async audit(user: SessionUser, runId: string) {
    const ctx = await this.context(user, runId)
    const rows: { occurred_at: Date; actor: string | null; action: string; entity_id: string; before: unknown; after: unknown }[] = await this.db.query(
      `SELECT e.occurred_at, u.display_name AS actor, e.action, e.entity_id, e.before, e.after
         FROM audit_event e LEFT JOIN app_user u ON u.id = e.actor_id
        WHERE e.project_id = $1 AND (e.entity_id = $2 OR e.entity_id LIKE $2 || '/%' OR (e.after ->> 'runId') = $2)
        ORDER BY e.id`,
      [ctx.run.projectId, runId],
    )
    return rows.map((r) => ({ occurredAt: r.occurred_at.toISOString(), actor: r.actor, action: r.action, target: r.entity_id, before: r.before, after: r.after }))
  }

}

function describeEntry(entry: Record<string, unknown> | null): string {
  if (!entry) return 'nothing'
  const v = entry.value
  if (typeof v === 'boolean') return v ? 'yes' : 'no'
  return typeof v === 'string' ? v : 'a new value'
}
