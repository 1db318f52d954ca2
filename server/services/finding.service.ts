import type { DataSource, EntityManager } from 'typeorm'
import sharp from 'sharp'
import { fileTypeFromBuffer } from 'file-type'
import type { FindingCreateInput, FindingUpdateInput } from '@shared/schemas/run'
import type { SessionUser } from '@shared/types/api'
import { EDITABLE_RUN_STATES, type FindingSummary, type ReviewItem, type RunAttachment as RunAttachmentView, type RunReview } from '@shared/types/run'
import { AppError } from '../errors/app-error'
import { Attachment, Finding, RunAttachment } from '../entities'
import type { StorageService } from '../storage/storage'
import { recordAudit } from './audit.service'
import { changedKeys, editConflict } from './edit-conflict'
import { attachmentViews, findingViews, keep, keptSnapshot, liveSnapshot, signedSnapshotHash } from './run-record'
import { systemClock, type Clock } from './clock'
import { blockingFindings, byOthersOf, checkIndexOf, countRunRecord, exceptionsOf, fieldPlaces, runSupersedes, safetyStop } from '@shared/record'
import { lineageOf } from './report.service'
import type { RunContext, RunService } from './run.service'

/** What may be attached to a run: photos and PDFs, recognised by their bytes, not by the name a browser gave them. */
export const RUN_FILE_TYPES: Record<string, string> = { 'image/jpeg': 'jpg', 'image/png': 'png', 'image/webp': 'webp', 'application/pdf': 'pdf' }
const THUMBNAIL_PX = 320
/** Words for what a finding edit changes, for "Sam changed the description at 14:02 UTC". */
const FINDING_LABELS: Record<string, string> = { severity: 'severity', description: 'description', status: 'status', resolution: 'resolution' }

/** Findings (deficiencies), attachments and the review summary of a run. */
export class FindingService {
  constructor(
    private readonly db: DataSource,
    private readonly runs: Pick<RunService, 'context'>,
    private readonly storage: StorageService,
    private readonly clock: Clock = systemClock,
  ) {}

  async listViews(runId: string, manager: EntityManager = this.db.manager): Promise<FindingSummary[]> {
    return findingViews(manager, runId)
  }

  async attachmentViews(runId: string, manager: EntityManager = this.db.manager): Promise<RunAttachmentView[]> {
    return attachmentViews(manager, runId)
  }

  private assertCanEdit(user: SessionUser, ctx: RunContext) {
    if (user.role !== 'technician') throw AppError.forbidden('Only a commissioning technician on this project can change a run')
    if (!EDITABLE_RUN_STATES.includes(ctx.run.state)) throw new AppError('run_locked', `This run is ${ctx.run.state.replace('_', ' ')} and can no longer be changed`, 409)
  }

  private assertPlace(ctx: RunContext, stepId: string, fieldId: string | null | undefined) {
    const steps = new Set(ctx.definition.sections.flatMap((s) => s.steps.map((st) => st.id)))
    if (!steps.has(stepId)) throw new AppError('unknown_step', `There is no step ${stepId} in this run’s checklist`, 400, { stepId: 'Not a step of this run’s checklist version' })
    if (fieldId) {
      const place = fieldPlaces(ctx.definition).get(fieldId)
      if (!place || place.stepId !== stepId) throw new AppError('unknown_field', `There is no field ${fieldId} in step ${stepId}`, 400, { fieldId: 'Not a field of that step' })
    }
  }

  async create(user: SessionUser, runId: string, input: FindingCreateInput): Promise<FindingSummary> {
    const id = await this.db.transaction(async (tx) => {
      const ctx = await this.runs.context(user, runId, tx, true)
      this.assertCanEdit(user, ctx)
      this.assertPlace(ctx, input.stepId, input.fieldId)
      const now = this.clock()
      const finding = await tx.getRepository(Finding).save({ runId, stepId: input.stepId, fieldId: input.fieldId ?? null, severity: input.severity, description: input.description, status: 'open' as const, createdBy: user.id, createdAt: now, updatedAt: now })
      await recordAudit(tx, { actorId: user.id, action: 'finding.create', entityType: 'finding', entityId: finding.id, projectId: ctx.run.projectId, after: { runId, stepId: finding.stepId, fieldId: finding.fieldId, severity: finding.severity, description: finding.description }, occurredAt: now })
      return finding.id
    })
    return this.view(runId, id)
  }

  /** One finding as the runner shows it, with the edit version its next edit must name. */
  private async view(runId: string, findingId: string, manager: EntityManager = this.db.manager): Promise<FindingSummary> {
    const views = await this.listViews(runId, manager)
    const row = await manager.getRepository(Finding).findOneByOrFail({ id: findingId, runId })
    return { ...views.find((f) => f.id === findingId)!, version: row.version }
  }

  /**
   * Edits, resolves or reopens a finding on the version the edit was made on: one made on an older version is refused
   * (409 `edit_conflict`, with who changed what and the finding as it is now); one that changes nothing is accepted.
   */
  async update(user: SessionUser, runId: string, findingId: string, input: FindingUpdateInput): Promise<FindingSummary> {
    await this.db.transaction(async (tx) => {
      const ctx = await this.runs.context(user, runId, tx, true)
      this.assertCanEdit(user, ctx)
      const finding = await tx.getRepository(Finding).findOneBy({ id: findingId, runId })
      if (!finding) throw AppError.notFound('Finding')
      const before = { severity: finding.severity, description: finding.description, status: finding.status, resolution: finding.resolution }
      const now = this.clock()
      if (input.severity !== undefined) finding.severity = input.severity
      if (input.description !== undefined) finding.description = input.description
      if (input.status === 'resolved' && finding.status !== 'resolved') {
        finding.status = 'resolved'
        finding.resolution = input.resolution ?? null
        finding.resolvedBy = user.id
        finding.resolvedAt = now
      } else if (input.status === 'open') {
        finding.status = 'open'
        finding.resolution = null
        finding.resolvedBy = null
        finding.resolvedAt = null
      } else if (input.resolution !== undefined && finding.status === 'resolved' && input.resolution !== finding.resolution) {
        // A new account of how it was resolved is that person's, at that moment.
        finding.resolution = input.resolution
        finding.resolvedBy = user.id
        finding.resolvedAt = now
      }
      const after = { severity: finding.severity, description: finding.description, status: finding.status, resolution: finding.resolution }
      if (!changedKeys(before, after).length) return
      if (finding.version !== input.version) {
        throw await editConflict(tx, {
          entityType: 'finding',
          entityId: finding.id,
          actions: ['finding.update'],
          labels: FINDING_LABELS,
          thing: 'this finding',
          viewerId: user.id,
          current: await this.view(runId, findingId, tx),
        })
      }
      finding.updatedAt = now
      finding.version += 1
      await tx.getRepository(Finding).save(finding)
      await recordAudit(tx, { actorId: user.id, action: 'finding.update', entityType: 'finding', entityId: finding.id, projectId: ctx.run.projectId, before, after: { ...after, runId }, occurredAt: now })
    })
    return this.view(runId, findingId)
  }

  /** Stores a photo or PDF for a step (a field, a finding), with a thumbnail for images; the bytes decide the type. */
  async attach(
    user: SessionUser,
    runId: string,
    file: { buffer: Buffer; originalname: string },
    where: { stepId: string; fieldId?: string; findingId?: string },
  ): Promise<RunAttachmentView> {
    const ctx = await this.runs.context(user, runId)
    this.assertCanEdit(user, ctx)
    this.assertPlace(ctx, where.stepId, where.fieldId)
    if (where.findingId && !(await this.db.getRepository(Finding).existsBy({ id: where.findingId, runId }))) {
      throw new AppError('not_found', 'Finding was not found on this run', 404, { findingId: 'No such finding on this run' })
    }
    const detected = await fileTypeFromBuffer(file.buffer)
    const extension = detected ? RUN_FILE_TYPES[detected.mime] : undefined
    if (!detected || !extension) throw new AppError('unsupported_file', 'Attach a photo (JPEG, PNG, WebP) or a PDF', 415, { file: 'Not a JPEG, PNG, WebP image or a PDF' })
    const stored = await this.storage.save(file.buffer, 'runs', extension)
    let thumbnailKey: string | null = null
    if (detected.mime.startsWith('image/')) {
      try {
        const thumb = await sharp(file.buffer).rotate().resize(THUMBNAIL_PX, THUMBNAIL_PX, { fit: 'inside', withoutEnlargement: true }).webp({ quality: 78 }).toBuffer()
        thumbnailKey = (await this.storage.save(thumb, 'thumbnails', 'webp')).key
      } catch {
        throw new AppError('unreadable_image', 'The image could not be read; it may be damaged', 422, { file: 'The image could not be read' })
      }
    }
    const now = this.clock()
    const id = await this.db.transaction(async (tx) => {
      const attachment = await tx.getRepository(Attachment).save({
        createdAt: now,
        organizationId: ctx.project.organizationId,
        storageKey: stored.key,
        sha256: stored.sha256,
        mimeType: detected.mime,
        sizeBytes: stored.size,
        originalName: file.originalname.slice(0, 200) || `attachment.${extension}`,
        uploadedBy: user.id,
      })
      const link = await tx.getRepository(RunAttachment).save({ runId, attachmentId: attachment.id, stepId: where.stepId, fieldId: where.fieldId ?? null, findingId: where.findingId ?? null, thumbnailKey, createdAt: now })
      await recordAudit(tx, { actorId: user.id, action: 'attachment.add', entityType: 'run_attachment', entityId: link.id, projectId: ctx.run.projectId, after: { runId, ...where, sha256: stored.sha256, mimeType: detected.mime, sizeBytes: stored.size }, occurredAt: now })
      return link.id
    })
    return (await this.attachmentViews(runId)).find((a) => a.id === id)!
  }

  async file(user: SessionUser, runId: string, linkId: string, thumbnail: boolean): Promise<{ data: Buffer; mimeType: string; sha256: string; name: string }> {
    await this.runs.context(user, runId)
    const link = await this.db.getRepository(RunAttachment).findOne({ where: { id: linkId, runId }, relations: { attachment: true } })
    if (!link) throw AppError.notFound('Attachment')
    if (thumbnail) {
      if (!link.thumbnailKey) throw AppError.notFound('Thumbnail')
      const data = await this.storage.stream(link.thumbnailKey).then(async (s) => Buffer.concat(await s.toArray()))
      return { data, mimeType: 'image/webp', sha256: link.attachment.sha256, name: link.attachment.originalName }
    }
    const data = await this.storage.read(link.attachment.storageKey, link.attachment.sha256)
    return { data, mimeType: link.attachment.mimeType, sha256: link.attachment.sha256, name: link.attachment.originalName }
  }

  /**
   * What the signer must see before signing: every fail and marginal with its handling, what is missing, what is open,
   * and the hash of the snapshot to sign. Until the performer signs, that is the live run; from then on it is the
   * snapshot the performer signed, so the owner's representative reviews and accepts exactly that.
   */
  async review(user: SessionUser, runId: string, manager: EntityManager = this.db.manager): Promise<RunReview> {
    const ctx = await this.runs.context(user, runId, manager)
    const signedHash = EDITABLE_RUN_STATES.includes(ctx.run.state) ? null : await signedSnapshotHash(manager, runId)
    const kept = signedHash ? await keptSnapshot(manager, runId, signedHash) : keep(await liveSnapshot(manager, runId))
    const { snapshot } = kept
    const findings = snapshot.findings
    const places = fieldPlaces(snapshot.definition)
    const count = countRunRecord(snapshot)
    const problems: ReviewItem[] = []
    const missingRequired: ReviewItem[] = []
    for (const result of count.results.values()) {
      const r = snapshot.readings[result.fieldId]
      const place = places.get(result.fieldId)!
      const item = (verdict: ReviewItem['verdict']): ReviewItem => ({
        sectionId: place.sectionId,
        stepId: place.stepId,
        fieldId: result.fieldId,
        label: place.field.label,
        verdict,
        message: r?.evaluation.message ?? `${place.field.label} has not been recorded`,
        findingIds: findings.filter((f) => f.fieldId === result.fieldId).map((f) => f.id),
        justification: r?.justification ?? null,
      })
      if (result.outcome === 'fail' || result.outcome === 'marginal') problems.push(item(result.outcome))
      else if (result.outcome === 'incomplete' && !place.step.safety) missingRequired.push(item('incomplete'))
    }
    problems.sort((a, b) => (a.verdict === b.verdict ? 0 : a.verdict === 'fail' ? -1 : 1))
    const stop = safetyStop(snapshot.definition, Object.fromEntries(Object.values(snapshot.readings).map((r) => [r.fieldId, r.evaluation])))
    const unansweredSafety = [...count.results.values()].filter((x) => x.outcome === 'incomplete' && places.get(x.fieldId)!.step.safety && !stop?.fieldIds.includes(x.fieldId))
    const unhandled = problems.filter((p) => p.verdict === 'fail' && !p.findingIds.length && !p.justification?.trim())
    const blockers = [
      ...(stop ? [stop.message] : []),
      ...unansweredSafety.map((x) => `${places.get(x.fieldId)!.field.label}: answer this pre-work safety item`),
      ...unhandled.map((p) => `${p.label} failed and has neither a finding nor a justification`),
      ...missingRequired.map((m) => (places.get(m.fieldId)!.field.computed ? `${m.message}` : `${m.label} is required and has no value (record it, or give its disposition: not applicable, by others, verified earlier, deferred or not done)`)),
    ]
    if (!EDITABLE_RUN_STATES.includes(ctx.run.state)) blockers.push(`The run is ${ctx.run.state.replace('_', ' ')}`)
    const exceptions = exceptionsOf(snapshot, count)
    // What accepting it supersedes among the reports accepted before it (before its own acceptance, once accepted).
    const [own] = (await manager.query(`SELECT accepted_at FROM report WHERE run_id = $1`, [runId])) as { accepted_at: Date | null }[]
    const earlier = await lineageOf(manager, { equipmentId: snapshot.run.equipmentId, templateId: snapshot.run.templateId }, { before: own?.accepted_at ?? undefined, excludeRunId: runId })
    return {
      counts: count.totals,
      problems,
      missingRequired,
      openFindings: findings.filter((f) => f.status === 'open'),
      exceptions,
      blockingFindings: blockingFindings(findings).map((f) => f.id),
      byOthers: byOthersOf(snapshot.definition, count),
      canSign: blockers.length === 0,
      blockers,
      snapshotSha256: kept.sha256,
      supersession: runSupersedes(checkIndexOf(count), earlier, 'preview'),
    }
  }
}
