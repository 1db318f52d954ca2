import { siteBarometric } from '@shared/engineering'
import { isDeepStrictEqual } from 'node:util'
import { DataSource, In, type EntityManager, type Repository } from 'typeorm'
import * as yup from 'yup'
import type { ChecklistDefinition } from '@shared/schemas/checklist'
import { describeDisposition, dispositionOf, fieldPlaces, runDetailFromSnapshot, safetyStop, signatureRecord } from '@shared/record'
import { entrySchemaFor, type FieldEntry } from '@shared/schemas/reading'
import { dependentFields, physicalBoundsProblem } from '@shared/rules'
import { requestedDisposition, type ReadingChangeInput, type StepChangeInput } from '@shared/schemas/run'
import type { SessionUser } from '@shared/types/api'
import {
  EDITABLE_RUN_STATES,
  type ReadingSaved,
  type RunProgress,
  type RunDetail,
  type RunState,
  type RunStepState,
  type RunSummary,
} from '@shared/types/run'
import { AppError } from '../errors/app-error'
import { isUniqueViolation } from '../errors/database-errors'
import { ChecklistTemplate, Equipment, Project, Reading, Report, Run, RunChange, RunStep, Signature, TemplateVersion } from '../entities'
import { fieldErrors } from '../middleware/validate'
import { recordAudit } from './audit.service'
import { attachmentViews, countRows, displayNames, evaluateAll, findingViews, keptSnapshot, MissingSnapshotError, readingView, signedSnapshotHash, stepView } from './run-record'
import { systemClock, type Clock } from './clock'
import { lockRun, readingRows, runForChange, recordChange, rejudged, stepRows, storeProgress } from './run-save'
import type { ProjectService } from './project.service'

/** The run page's first statement: the run with what it is shown and judged with, and whether the person may see it. */
interface RunPageRow {
  id: string
  project_id: string
  equipment_id: string
  template_version_id: string
  state: RunState
  version: number
  started_at: Date
  updated_at: Date
  started_by: string | null
  started_by_name: string | null
  project_code: string
  project_name: string
  unit_system: Project['unitSystem']
  site_elevation_m: number | null
  barometric_kpa: number | null
  equipment_tag: string
  equipment_kind: string
  design_point: Equipment['designPoint']
  version_number: number
  template_id: string
  template_name: string
  allowed: boolean
}

/** Everything a run is judged with: the pinned definition, the equipment's design point and the project's units. */
export interface RunContext {
  run: Run
  project: Project
  equipment: Equipment
  version: TemplateVersion
  template: ChecklistTemplate
  definition: ChecklistDefinition
}

export { fieldPlaces, progressOf } from '@shared/record'

export { evaluateAll } from './run-record'

/** Runs: started on an equipment item from a pinned template version, filled field by field, judged by the shared rules. */
export class RunService {
  constructor(
    private readonly db: DataSource,
    private readonly projects: ProjectService,
    private readonly clock: Clock = systemClock,
  ) {}

  /** Definitions of pinned checklist versions by version id (a published version is frozen by the database). */
  private readonly definitions = new Map<string, ChecklistDefinition>()

  private names(ids: (string | null)[]): Promise<Map<string, string>> {
    return displayNames(this.db.manager, ids)
  }

  /** Whether `user` may read run data of this state (contractors see only accepted records). */
  private mayRead(user: SessionUser, state: RunState): boolean {
    return user.role !== 'contractor' || state === 'accepted'
  }

  /** Loads a run and what it is judged with; 404 when the user may not see it. `lock` serialises changes to one run. */
  async context(user: SessionUser, runId: string, manager: EntityManager = this.db.manager, lock = false): Promise<RunContext> {
    const run = await manager.getRepository(Run).findOne({ where: { id: runId }, ...(lock ? { lock: { mode: 'pessimistic_write' as const } } : {}) })
    if (!run || !(await this.projects.canAccess(user, run.projectId, manager)) || !this.mayRead(user, run.state)) throw AppError.notFound('Run')
    return this.contextOf(run, manager)
  }

  /** What a run is judged with, for a run already found (and, where a person asks, already allowed). */
  private async contextOf(run: Run, manager: EntityManager = this.db.manager): Promise<RunContext> {
    // One after another: inside a transaction one connection answers one query at a time.
    const project = await manager.getRepository(Project).findOneByOrFail({ id: run.projectId })
    const equipment = await manager.getRepository(Equipment).findOneByOrFail({ id: run.equipmentId })
    const version = await manager.getRepository(TemplateVersion).findOneByOrFail({ id: run.templateVersionId })
    const template = await manager.getRepository(ChecklistTemplate).findOneByOrFail({ id: version.templateId })
    return { run, project, equipment, version, template, definition: version.definition as unknown as ChecklistDefinition }
  }

  /** Only technicians on the run's project change it, and only while it is in progress or returned. */
  private assertCanEdit(user: SessionUser, state: RunState) {
    if (user.role !== 'technician') throw AppError.forbidden('Only a commissioning technician on this project can change a run')
    if (!EDITABLE_RUN_STATES.includes(state)) {
      throw new AppError('run_locked', `This run is ${state.replace('_', ' ')} and can no longer be changed`, 409)
    }
  }

  async start(user: SessionUser, equipmentId: string, templateId: string): Promise<RunDetail> {
    if (user.role !== 'technician') throw AppError.forbidden('Only a commissioning technician starts a run')
    const runId = await this.db.transaction(async (tx) => {
      const equipment = await tx.getRepository(Equipment).findOneBy({ id: equipmentId })
      if (!equipment || !(await this.projects.canAccess(user, equipment.projectId, tx))) throw AppError.notFound('Equipment')
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
      const rows = blank.map((r) =>
        tx.getRepository(Reading).create({
          runId: r.runId,
          fieldId: r.fieldId,
          entry: null,
          evaluation: evaluations[r.fieldId],
          verdict: evaluations[r.fieldId].verdict,
          canonicalValue: evaluations[r.fieldId].canonical?.value ?? null,
          version: 0,
        }),
      )
      await tx.getRepository(Reading).save(rows)
      const steps = definition.sections.flatMap((s) => s.steps.map((st) => ({ runId: run.id, stepId: st.id })))
      await tx.getRepository(RunStep).insert(steps)
      await storeProgress(tx, run.id, countRows(definition, rows, []).totals)
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
    const [projects, equipment, versions, kept, openFindings, issued] = await Promise.all([
      this.db.getRepository(Project).findBy({ id: In([...new Set(runs.map((r) => r.projectId))]) }),
      this.db.getRepository(Equipment).findBy({ id: In([...new Set(runs.map((r) => r.equipmentId))]) }),
      this.db.getRepository(TemplateVersion).find({ where: { id: In([...new Set(runs.map((r) => r.templateVersionId))]) }, select: { id: true, templateId: true, number: true } }),
      // Each run's counts as its last change left them (run_progress), not every reading of every run.
      this.db.query(`SELECT run_id, progress FROM run_progress WHERE run_id = ANY($1::uuid[])`, [ids]) as Promise<{ run_id: string; progress: RunProgress }[]>,
      this.db.query(`SELECT run_id, count(*)::int AS n FROM finding WHERE run_id = ANY($1::uuid[]) AND status = 'open' GROUP BY run_id`, [ids]) as Promise<{ run_id: string; n: number }[]>,
      // An accepted run is named as it was issued (its report keeps the signed snapshot's identity), not as renamed since.
      this.db.getRepository(Report).find({ where: { runId: In(ids) }, select: { runId: true, equipmentTag: true, equipmentKind: true, projectCode: true, projectName: true } }),
    ])
    const templates = await this.db.getRepository(ChecklistTemplate).findBy({ id: In([...new Set(versions.map((v) => v.templateId))]) })
    const names = await this.names(runs.map((r) => r.startedBy))
    const byId = <T extends { id: string }>(list: T[]) => new Map(list.map((x) => [x.id, x]))
    const [pMap, eMap, vMap, tMap] = [byId(projects), byId(equipment), byId(versions), byId(templates)]
    const progress = new Map(kept.map((k) => [k.run_id, k.progress]))
    for (const run of runs.filter((r) => !progress.has(r.id))) progress.set(run.id, await this.countedNow(run))
    return runs.map((run) => {
      const version = vMap.get(run.templateVersionId)!
      const project = pMap.get(run.projectId)!
      const eq = eMap.get(run.equipmentId)!
      const report = run.state === 'accepted' ? issued.find((r) => r.runId === run.id) : undefined
      return {
        id: run.id,
        projectId: run.projectId,
        projectCode: report?.projectCode ?? project.code,
        projectName: report?.projectName ?? project.name,
        equipmentId: run.equipmentId,
        equipmentTag: report?.equipmentTag ?? eq.tag,
        equipmentKind: report?.equipmentKind ?? eq.kind,
        templateId: version.templateId,
        templateName: tMap.get(version.templateId)!.name,
        templateVersionNumber: version.number,
        state: run.state,
        version: run.version,
        startedAt: run.startedAt.toISOString(),
        startedByName: run.startedBy ? (names.get(run.startedBy) ?? null) : null,
        updatedAt: run.updatedAt.toISOString(),
        progress: progress.get(run.id)!,
        openFindings: openFindings.find((f) => f.run_id === run.id)?.n ?? 0,
      }
    })
  }

  /** A run's counts from its stored rows, kept for the next list (a run written before counts were kept). */
  private async countedNow(run: Run): Promise<RunProgress> {
    const [definition, readings, steps] = await Promise.all([
      this.definitionOf(this.db.manager, run.templateVersionId),
      this.db.getRepository(Reading).find({ where: { runId: run.id }, select: { fieldId: true, verdict: true, canonicalValue: true, notApplicable: true, naReason: true, disposition: true } }),
      this.db.getRepository(RunStep).find({ where: { runId: run.id, notApplicable: true }, select: { stepId: true, notApplicable: true, naReason: true, disposition: true } }),
    ])
    const totals = countRows(definition, readings, steps).totals
    await this.db.query(`INSERT INTO run_progress (run_id, progress) VALUES ($1, $2::jsonb) ON CONFLICT (run_id) DO NOTHING`, [run.id, JSON.stringify(totals)])
    return totals
  }

  /** Runs the person may see, newest change first, a page at a time (keyset on updated_at, id); `nextCursor` reads on. */
  async listPage(
    user: SessionUser,
    query: { state?: RunState; projectId?: string; equipmentId?: string; mine?: boolean; limit?: number; cursor?: string },
  ): Promise<{ runs: RunSummary[]; nextCursor: string | null }> {
    const limit = query.limit ?? RUN_PAGE_SIZE
    const qb = this.db.getRepository(Run).createQueryBuilder('r').orderBy('r.updated_at', 'DESC').addOrderBy('r.id', 'DESC').limit(limit + 1)
    if (query.cursor) {
      const at = decodeRunCursor(query.cursor)
      qb.andWhere('(r.updated_at, r.id) < (CAST(:cursorAt AS timestamptz), CAST(:cursorId AS uuid))', { cursorAt: at.updatedAt, cursorId: at.id })
    }
    this.scope(qb, user, query)
    // The cursor keeps the microseconds PostgreSQL stores (a JavaScript Date has milliseconds only).
    qb.addSelect(`to_char(r.updated_at AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.US"Z"')`, 'cursor_at')
    const { entities, raw } = await qb.getRawAndEntities<{ cursor_at: string }>()
    const page = entities.slice(0, limit)
    const last = page.length ? { updatedAt: raw[page.length - 1].cursor_at, id: page[page.length - 1].id } : null
    return { runs: await this.summaries(page), nextCursor: entities.length > limit && last ? encodeRunCursor(last) : null }
  }

  /** Every run the person may see for one equipment item or filter (all pages). */
  async list(user: SessionUser, query: { state?: RunState; projectId?: string; equipmentId?: string; mine?: boolean }): Promise<RunSummary[]> {
    const out: RunSummary[] = []
    let cursor: string | undefined
    do {
      const page = await this.listPage(user, { ...query, cursor, limit: 200 })
      out.push(...page.runs)
      cursor = page.nextCursor ?? undefined
    } while (cursor)
    return out
  }

  private scope(qb: ReturnType<Repository<Run>['createQueryBuilder']>, user: SessionUser, query: { state?: RunState; projectId?: string; equipmentId?: string; mine?: boolean }) {
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
  }

  private async stepView(step: RunStep): Promise<RunStepState> {
    return stepView(step, await this.names([step.updatedBy]))
  }

  /**
   * The run page: one statement for the run with its project, equipment, version, template and the person's access;
   * then (in progress) its readings, steps, findings, files and signatures, each one statement with names joined.
   */
  async detail(user: SessionUser, runId: string): Promise<RunDetail> {
    const uuid = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i
    if (!uuid.test(runId)) throw AppError.notFound('Run')
    const [row] = (await this.db.query(
      `SELECT r.id, r.project_id, r.equipment_id, r.template_version_id, r.state, r.version, r.started_at, r.updated_at, r.started_by,
              su.display_name AS started_by_name, p.code AS project_code, p.name AS project_name, p.unit_system, p.site_elevation_m, p.barometric_kpa,
              e.tag AS equipment_tag, e.kind AS equipment_kind, e.design_point, v.number AS version_number, v.template_id, t.name AS template_name,
              CASE WHEN $3 = 'admin'
                   THEN EXISTS (SELECT 1 FROM app_user u WHERE u.id = $2 AND u.organization_id = p.organization_id)
                   ELSE EXISTS (SELECT 1 FROM project_member m WHERE m.project_id = p.id AND m.user_id = $2) END AS allowed
         FROM run r
         JOIN project p ON p.id = r.project_id
         JOIN equipment e ON e.id = r.equipment_id
         JOIN template_version v ON v.id = r.template_version_id
         JOIN checklist_template t ON t.id = v.template_id
         LEFT JOIN app_user su ON su.id = r.started_by
        WHERE r.id = $1`,
      [runId, user.id, user.role],
    )) as RunPageRow[]
    if (!row || !row.allowed || !this.mayRead(user, row.state)) throw AppError.notFound('Run')
    const run = Object.assign(new Run(), {
      id: row.id,
      projectId: row.project_id,
      equipmentId: row.equipment_id,
      templateVersionId: row.template_version_id,
      state: row.state,
      version: row.version,
      startedAt: row.started_at,
      updatedAt: row.updated_at,
      startedBy: row.started_by,
    })
    if (!EDITABLE_RUN_STATES.includes(row.state)) return this.signedDetail(run)
    const manager = this.db.manager
    const [definition, readings, steps, findings, attachments, signatures] = await Promise.all([
      this.definitionOf(manager, row.template_version_id),
      readingRows(manager, runId),
      stepRows(manager, runId),
      findingViews(manager, runId),
      attachmentViews(manager, runId),
      this.signatures(runId),
    ])
    const names = new Map<string, string>()
    for (const r of [...readings, ...steps]) if (r.updatedBy && r.updatedByName) names.set(r.updatedBy, r.updatedByName)
    const project = { unitSystem: row.unit_system, siteElevationM: row.site_elevation_m, barometricKpa: row.barometric_kpa }
    return {
      id: run.id,
      projectId: run.projectId,
      projectCode: row.project_code,
      projectName: row.project_name,
      equipmentId: run.equipmentId,
      equipmentTag: row.equipment_tag,
      equipmentKind: row.equipment_kind,
      templateId: row.template_id,
      templateName: row.template_name,
      templateVersionNumber: row.version_number,
      state: run.state,
      version: run.version,
      startedAt: run.startedAt.toISOString(),
      startedByName: row.started_by_name,
      updatedAt: run.updatedAt.toISOString(),
      progress: countRows(definition, readings, steps.filter((st) => st.notApplicable)).totals,
      openFindings: findings.filter((f) => f.status === 'open').length,
      unitSystem: row.unit_system,
      siteBarometricKpa: siteBarometric(project).kpa,
      definition,
      designPoint: row.design_point,
      readings: Object.fromEntries(readings.map((r) => [r.fieldId, readingView(r, names)])),
      steps: Object.fromEntries(steps.map((st) => [st.stepId, stepView(st, names)])),
      findings,
      attachments,
      signatures,
    }
  }

  /**
   * The run as it was signed, for server-side work that acts for nobody in particular (the handover package): the
   * kept snapshot of an accepted run, with its signatures.
   */
  async detailForReport(runId: string): Promise<RunDetail> {
    const run = await this.db.getRepository(Run).findOneByOrFail({ id: runId })
    return this.signedDetail(run)
  }

  private async signatures(runId: string) {
    return (await this.db.getRepository(Signature).find({ where: { runId }, order: { signedAt: 'ASC', id: 'ASC' } })).map(signatureRecord)
  }

  /** A submitted or accepted run is what its performer signed: the kept snapshot, never the live tables. */
  private async signedDetail(run: Run): Promise<RunDetail> {
    const hash = await signedSnapshotHash(this.db.manager, run.id)
    if (!hash) throw new AppError('not_signed', 'This run has not been signed', 409)
    let kept
    try {
      kept = await keptSnapshot(this.db.manager, run.id, hash)
    } catch (err) {
      if (!(err instanceof MissingSnapshotError)) throw err
      // Signed before snapshots were kept (a database older than this rule): its rows are what there is, and the
      // triggers have refused every change to them since acceptance.
      return this.liveDetail(await this.contextOf(run))
    }
    return runDetailFromSnapshot(kept.snapshot, { state: run.state, version: run.version, updatedAt: run.updatedAt.toISOString(), signatures: await this.signatures(run.id) })
  }

  /** The run from the live tables: what the runner shows while it is being filled in. */
  private async liveDetail(ctx: RunContext): Promise<RunDetail> {
    const runId = ctx.run.id
    const manager = this.db.manager
    const [[summary], readings, steps, findings, attachments, signatures] = await Promise.all([
      this.summaries([ctx.run]),
      manager.getRepository(Reading).findBy({ runId }),
      manager.getRepository(RunStep).findBy({ runId }),
      findingViews(manager, runId),
      attachmentViews(manager, runId),
      this.signatures(runId),
    ])
    const names = await this.names([...readings.map((r) => r.updatedBy), ...steps.map((s) => s.updatedBy)])
    return {
      ...summary,
      unitSystem: ctx.project.unitSystem,
      siteBarometricKpa: siteBarometric(ctx.project).kpa,
      definition: ctx.definition,
      designPoint: ctx.equipment.designPoint,
      readings: Object.fromEntries(readings.map((r) => [r.fieldId, readingView(r, names)])),
      steps: Object.fromEntries(steps.map((s) => [s.stepId, stepView(s, names)])),
      findings,
      attachments,
      signatures,
    }
  }

  /**
   * Saves one field's entry (or its not-applicable state), re-judges the fields that depend on it, and records the
   * change in two statements on one connection, with no transaction held between them: the run as it stands (what it is
   * judged by, whether this change id was applied before, its readings), then one statement writing the saved reading,
   * every verdict that followed it, the change id, the audit event, the run's time, revision and counts, only if the
   * run's revision is still the one read. If another change came in between, the save is done again under the run's
   * row lock (a transaction: the lock, then the same two statements), as is a run's first save in this process (its
   * checklist not yet known) and a photo field's (its attachments checked with one more). The answer carries the changed readings and the
   * new progress.
   */
  async setReading(user: SessionUser, runId: string, fieldId: string, input: ReadingChangeInput): Promise<ReadingSaved> {
    // A run's checklist version never changes: once known, the fields this save can change are known before the
    // first statement, and only their readings are read whole (the rest only as judging and counting need them).
    const knownVersion = this.runVersions.get(runId)
    const knownDefinition = knownVersion ? this.definitions.get(knownVersion) : undefined
    const knownPlace = knownDefinition ? fieldPlaces(knownDefinition).get(fieldId) : undefined
    const wanted = knownDefinition && knownPlace ? dependentFields(knownDefinition, fieldId) : null
    if (wanted && knownPlace?.field.kind !== 'photo') {
      const runner = this.db.createQueryRunner()
      try {
        const saved = await this.saveReading(runner.manager, user, runId, fieldId, input, wanted, false)
        if (saved) return saved
      } catch (err) {
        // The same change id applied meanwhile (a retry racing its first try): the locked save answers it as a duplicate.
        if (!isUniqueViolation(err)) throw err
      } finally {
        await runner.release()
      }
    }
    return (await this.db.transaction((tx) => this.saveReading(tx, user, runId, fieldId, input, wanted, true)))!
  }

  /** One try of a save (`setReading`): under the run's row lock, or optimistically (null when the run changed meanwhile). */
  private async saveReading(
    tx: EntityManager,
    user: SessionUser,
    runId: string,
    fieldId: string,
    input: ReadingChangeInput,
    wanted: ReadonlySet<string> | null,
    lock: boolean,
  ): Promise<ReadingSaved | null> {
    {
      if (lock) await lockRun(tx, runId)
      const row = await runForChange(tx, user, runId, { changeId: input.changeId, target: 'reading', targetId: fieldId }, wanted)
      if (!row || !row.allowed || !this.mayRead(user, row.state)) throw AppError.notFound('Run')
      assertAuthor(user, input.authorId)
      const definition = await this.definitionOf(tx, row.template_version_id)
      this.rememberRunVersion(runId, row.template_version_id)
      const naStepRows = row.na_steps as { stepId: string; disposition: unknown; notApplicable: boolean; naReason: string | null }[]
      const naSteps = new Set(naStepRows.map((st) => st.stepId))
      const readings = row.readings
      const current = readings.find((r) => r.fieldId === fieldId)
      const names = new Map<string, string>(readings.filter((r) => r.updatedBy && r.updatedByName).map((r) => [r.updatedBy!, r.updatedByName!]))
      const answer = (changed: Reading[]): ReadingSaved => ({
        reading: readingView(current!, names),
        readings: Object.fromEntries(changed.map((r) => [r.fieldId, readingView(r, names)])),
        progress: countRows(definition, readings, naStepRows as unknown as RunStep[]).totals,
        duplicate: false,
      })
      if (row.duplicate && current) return { ...answer([current]), duplicate: true }
      this.assertCanEdit(user, row.state)
      const place = fieldPlaces(definition).get(fieldId)
      if (!place || !current) {
        throw new AppError('unknown_field', `There is no field ${fieldId} in version ${row.version_number} of ${row.template_name}`, 400, { [fieldId]: 'Not a field of this run’s checklist version' })
      }
      const { field } = place
      const disposition = requestedDisposition(input)
      if (disposition && place.step.safety) {
        throw new AppError('safety_item', `${field.label} is a pre-work safety item: answer it; it cannot be set aside`, 400, { disposition: 'A pre-work safety item cannot be set aside', [fieldId]: 'Answer this safety item' })
      }
      if (!place.step.safety) {
        const stop = safetyStop(definition, Object.fromEntries(readings.map((r) => [r.fieldId, r])))
        if (stop) throw new AppError('run_stopped', stop.message, 409, { [fieldId]: stop.message })
      }
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
        if (field.kind === 'photo') await assertOwnPhotos(tx, runId, place.stepId, fieldId, field.label, entry)
      }
      const next = {
        entry: disposition ? null : (entry as Record<string, unknown> | null),
        disposition,
        notApplicable: disposition !== null,
        naReason: disposition ? (disposition.reason ?? describeDisposition(disposition)) : null,
        justification: input.justification ?? null,
      }
      const unchanged = isDeepStrictEqual(
        { entry: current.entry, disposition: dispositionOf(current), notApplicable: current.notApplicable, naReason: current.naReason, justification: current.justification },
        next,
      )
      if (current.version !== input.baseVersion && !unchanged) {
        const view = readingView(current, names)
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
      const before = { entry: current.entry, disposition: dispositionOf(current), justification: current.justification, verdict: current.verdict }
      const now = this.clock()
      if (!unchanged) {
        Object.assign(current, next, { version: current.version + 1, updatedBy: user.id, updatedAt: now })
        names.set(user.id, user.displayName)
      }
      // Only the fields that read this one can change verdict (shared/rules/dependencies.ts); they came whole.
      const dependents = dependentFields(definition, fieldId)
      for (const id of dependents) if (!row.detailed.has(id)) throw new Error(`The save of ${fieldId} read ${id} without its evaluation`)
      const changed = rejudged({ definition, equipment: { designPoint: row.design_point }, project: row.project }, readings, naSteps, dependents)
      if (!unchanged && !changed.includes(current)) changed.unshift(current)
      const audit = unchanged
        ? null
        : {
            actorId: user.id,
            action: 'reading.set',
            entityType: 'reading',
            entityId: `${runId}/${fieldId}`,
            projectId: row.project_id,
            before,
            after: { entry: current.entry, disposition: current.disposition, justification: current.justification, verdict: current.verdict },
            occurredAt: now,
          }
      const saved = answer(changed.length ? changed : [current])
      const written = await recordChange(
        tx,
        { changeId: input.changeId, runId, target: 'reading', targetId: fieldId, userId: user.id, at: now },
        audit,
        changed.length ? saved.progress : null,
        { rows: changed, ownFieldId: unchanged ? null : fieldId },
        { revision: row.revision, state: row.state },
      )
      return written ? saved : null
    }
  }

  /** Which checklist version each recently saved run is on (it never changes for a run). */
  private readonly runVersions = new Map<string, string>()

  private rememberRunVersion(runId: string, versionId: string) {
    if (this.runVersions.has(runId)) return
    if (this.runVersions.size >= 10_000) this.runVersions.delete(this.runVersions.keys().next().value as string)
    this.runVersions.set(runId, versionId)
  }

  /** A pinned (published, never changing) checklist version's definition, read once per process. */
  private async definitionOf(manager: EntityManager, versionId: string): Promise<ChecklistDefinition> {
    const known = this.definitions.get(versionId)
    if (known) return known
    const [found] = (await manager.query(`SELECT definition FROM template_version WHERE id = $1`, [versionId])) as { definition: ChecklistDefinition }[]
    if (this.definitions.size >= 200) this.definitions.delete(this.definitions.keys().next().value as string)
    this.definitions.set(versionId, found.definition)
    return found.definition
  }

  async setStep(user: SessionUser, runId: string, stepId: string, input: StepChangeInput): Promise<RunStepState> {
    await this.db.transaction(async (tx) => {
      const ctx = await this.context(user, runId, tx, true)
      assertAuthor(user, input.authorId)
      if (await tx.getRepository(RunChange).existsBy({ id: input.changeId, runId, target: 'step', targetId: stepId })) return
      this.assertCanEdit(user, ctx.run.state)
      const repo = tx.getRepository(RunStep)
      const step = await repo.findOneBy({ runId, stepId })
      if (!step) throw new AppError('unknown_step', `There is no step ${stepId} in this run’s checklist`, 400, { [stepId]: 'Not a step of this run’s checklist version' })
      const disposition = requestedDisposition(input)
      const stepDef = ctx.definition.sections.flatMap((s) => s.steps).find((s) => s.id === stepId)
      if (disposition && stepDef?.safety) {
        throw new AppError('safety_item', `${stepDef.title} is the pre-work safety step: answer its items; it cannot be set aside`, 400, { disposition: 'The pre-work safety step cannot be set aside' })
      }
      const next = { note: input.note ?? '', disposition, notApplicable: disposition !== null, naReason: disposition ? (disposition.reason ?? describeDisposition(disposition)) : null }
      const unchanged = isDeepStrictEqual({ note: step.note, disposition: dispositionOf(step), notApplicable: step.notApplicable, naReason: step.naReason }, next)
      if (step.version !== input.baseVersion && !unchanged) {
        const view = await this.stepView(step)
        const who = view.updatedByName ?? 'Someone'
        throw new AppError('step_conflict', `${who} changed this step's note or applicability meanwhile; keep theirs or save yours again`, 409, { [stepId]: `Changed by ${who}` }, { current: view })
      }
      const now = this.clock()
      let audit: Parameters<typeof recordChange>[2] = null
      let progress: RunProgress | null = null
      let rejudgedRows: Reading[] = []
      if (!unchanged) {
        const before = { note: step.note, disposition: dispositionOf(step) }
        Object.assign(step, next, { version: step.version + 1, updatedBy: user.id, updatedAt: now })
        await repo.save(step)
        if (!isDeepStrictEqual(before.disposition, next.disposition)) {
          const readings = await tx.getRepository(Reading).findBy({ runId })
          const naStepRows = await repo.findBy({ runId, notApplicable: true })
          // Setting a step aside (or back) empties (or restores) its fields' entries: verdicts follow. Another kind of
          // set-aside (deferred, done by others) keeps the verdicts and only counts differently.
          if ((before.disposition !== null) !== step.notApplicable) rejudgedRows = rejudged(ctx, readings, new Set(naStepRows.map((st) => st.stepId)))
          progress = countRows(ctx.definition, readings, naStepRows).totals
        }
        audit = { actorId: user.id, action: 'step.set', entityType: 'run_step', entityId: `${runId}/${stepId}`, projectId: ctx.run.projectId, before, after: { note: next.note, disposition: next.disposition }, occurredAt: now }
      }
      // The changed verdicts, the change id, the audit event, the run's time and its counts in one statement, as for a reading.
      await recordChange(tx, { changeId: input.changeId, runId, target: 'step', targetId: stepId, userId: user.id, at: now }, audit, progress, { rows: rejudgedRows, ownFieldId: null })
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

/** Runs per page of the run list unless the request asks for fewer or more (at most 200). */
export const RUN_PAGE_SIZE = 100

/** An opaque cursor: the last run's change time (to the microsecond, as PostgreSQL keeps it) and id. */
function encodeRunCursor(last: { updatedAt: string; id: string }): string {
  return Buffer.from(JSON.stringify([last.updatedAt, last.id])).toString('base64url')
}

function decodeRunCursor(cursor: string): { updatedAt: string; id: string } {
  try {
    const [updatedAt, id] = JSON.parse(Buffer.from(cursor, 'base64url').toString('utf8')) as unknown[]
    if (typeof updatedAt === 'string' && !Number.isNaN(Date.parse(updatedAt)) && typeof id === 'string' && /^[0-9a-f-]{36}$/i.test(id)) return { updatedAt, id }
  } catch {
    // falls through to the 400
  }
  throw new AppError('invalid_cursor', 'cursor is not one this list gave out; start again from the first page', 400, { cursor: 'Not a cursor from this list' })
}

function describeEntry(entry: Record<string, unknown> | null): string {
  if (!entry) return 'nothing'
  const v = entry.value
  if (typeof v === 'boolean') return v ? 'yes' : 'no'
  return typeof v === 'string' ? v : 'a new value'
}

/** A change queued on a shared device carries its author; it is applied only under that person's own session. */
function assertAuthor(user: SessionUser, authorId: string | undefined) {
  if (authorId !== undefined && authorId !== user.id) {
    throw new AppError('author_mismatch', 'This change was made by another person signed in on this device; it is sent only when that person signs in again', 409, { authorId: 'Not the signed-in person' })
  }
}

/** A photo field names only photos taken for it: attachments of this run and this field (or, unassigned, its step). */
async function assertOwnPhotos(tx: EntityManager, runId: string, stepId: string, fieldId: string, label: string, entry: FieldEntry) {
  const ids = (entry as { value: unknown }).value as string[]
  const uuid = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i
  const wellFormed = ids.filter((id) => uuid.test(id))
  const found: { id: string }[] = wellFormed.length
    ? await tx.query(
        `SELECT id FROM run_attachment WHERE id = ANY($1::uuid[]) AND run_id = $2 AND (field_id = $3 OR (field_id IS NULL AND step_id = $4))`,
        [wellFormed, runId, fieldId, stepId],
      )
    : []
  const known = new Set(found.map((r) => r.id))
  const foreign = ids.filter((id) => !known.has(id))
  if (foreign.length) {
    const message = `${label}: ${foreign.length === 1 ? 'a photo' : `${foreign.length} photos`} named here ${foreign.length === 1 ? 'is' : 'are'} not attached to this field of this run; take or attach the photo here`
    throw new AppError('foreign_attachment', message, 400, { [fieldId]: message, 'entry.value': message })
  }
}
