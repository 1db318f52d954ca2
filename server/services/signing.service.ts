import { createHash } from 'node:crypto'
import canonicalize from 'canonicalize'
import type { DataSource, EntityManager } from 'typeorm'
import type { ReturnInput, SignInput } from '@shared/schemas/run'
import type { SessionUser } from '@shared/types/api'
import { ROLE_LABELS } from '@shared/types/roles'
import type { SignatureMeaning, SignatureRecord } from '@shared/types/report'
import { EDITABLE_RUN_STATES } from '@shared/types/run'
import { verifyPassword } from '../auth/passwords'
import { AppError } from '../errors/app-error'
import { Equipment, Finding, ProjectMember, Reading, Run, RunAttachment, RunStep, Signature, User } from '../entities'
import type { MailService } from '../mail/mail.service'
import { renderMailText } from '../mail/mail.service'
import { recordAudit } from './audit.service'
import { systemClock, type Clock } from './clock'
import type { FindingService } from './finding.service'
import type { RunService } from './run.service'

export const MEANING_LABELS: Record<SignatureMeaning, string> = { performed_by: 'Performed by', accepted_by: 'Accepted by' }

/**
 * The canonical snapshot of a run (RFC 8785 JSON canonicalisation) and its SHA-256: what a signature signs. Any change to
 * a reading, note, not-applicable state, finding or attachment changes it.
 */
export async function runSnapshot(manager: EntityManager, runId: string): Promise<{ json: string; sha256: string }> {
  const run = await manager.getRepository(Run).findOneByOrFail({ id: runId })
  const [equipment, readings, steps, findings, attachments] = await Promise.all([
    manager.getRepository(Equipment).findOneByOrFail({ id: run.equipmentId }),
    manager.getRepository(Reading).find({ where: { runId }, order: { fieldId: 'ASC' } }),
    manager.getRepository(RunStep).find({ where: { runId }, order: { stepId: 'ASC' } }),
    manager.getRepository(Finding).find({ where: { runId }, order: { id: 'ASC' } }),
    manager.getRepository(RunAttachment).find({ where: { runId }, relations: { attachment: true }, order: { id: 'ASC' } }),
  ])
  const content = {
    run: { id: run.id, templateVersionId: run.templateVersionId, equipmentId: run.equipmentId, projectId: run.projectId },
    equipment: { tag: equipment.tag, serialNumber: equipment.serialNumber, designPoint: equipment.designPoint },
    readings: readings.map((r) => ({ fieldId: r.fieldId, entry: r.entry, notApplicable: r.notApplicable, naReason: r.naReason, justification: r.justification, verdict: r.verdict })),
    steps: steps.map((s) => ({ stepId: s.stepId, note: s.note, notApplicable: s.notApplicable, naReason: s.naReason })),
    findings: findings.map((f) => ({ id: f.id, stepId: f.stepId, fieldId: f.fieldId, severity: f.severity, description: f.description, status: f.status, resolution: f.resolution })),
    attachments: attachments.map((a) => ({ id: a.id, stepId: a.stepId, fieldId: a.fieldId, findingId: a.findingId, sha256: a.attachment.sha256 })),
  }
  const json = canonicalize(content) as string
  return { json, sha256: createHash('sha256').update(json).digest('hex') }
}

/** "2026-12-01 16:42 CST" in the project's zone. */
export function localTime(date: Date, timeZone: string): string {
  const parts = new Intl.DateTimeFormat('en-CA', { timeZone, year: 'numeric', month: '2-digit', day: '2-digit', hour: '2-digit', minute: '2-digit', hourCycle: 'h23', timeZoneName: 'short' }).formatToParts(date)
  const get = (t: string) => parts.find((p) => p.type === t)?.value ?? ''
  return `${get('year')}-${get('month')}-${get('day')} ${get('hour')}:${get('minute')} ${get('timeZoneName')}`
}

export function signatureRecord(s: Signature): SignatureRecord {
  return {
    id: s.id,
    meaning: s.meaning,
    meaningLabel: MEANING_LABELS[s.meaning],
    signerId: s.signerId,
    printedName: s.printedName,
    role: s.role,
    signedAtUtc: s.signedAt.toISOString(),
    signedAtLocal: localTime(s.signedAt, s.timeZone),
    timeZone: s.timeZone,
    imageDataUrl: s.imageDataUrl,
    snapshotSha256: s.snapshotSha256,
    voided: s.voided,
    voidedAt: s.voidedAt?.toISOString() ?? null,
    voidReason: s.voidReason,
  }
}

const PNG_MAGIC = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a])

/** Sign-off: the performer signs a complete run, the owner's representative accepts it or returns it with comments. */
export class SigningService {
  /** Called after acceptance, outside the signing transaction (report rendering is queued there). */
  onAccepted?: (runId: string) => Promise<void>

  constructor(
    private readonly db: DataSource,
    private readonly runs: RunService,
    private readonly findings: FindingService,
    private readonly mail: MailService,
    private readonly publicUrl: string,
    private readonly clock: Clock = systemClock,
  ) {}

  async list(runId: string): Promise<SignatureRecord[]> {
    const rows = await this.db.getRepository(Signature).find({ where: { runId }, order: { signedAt: 'ASC' } })
    return rows.map(signatureRecord)
  }

  private async checkPassword(user: SessionUser, password: string) {
    const row = await this.db.getRepository(User).createQueryBuilder('u').addSelect('u.passwordHash').where('u.id = :id', { id: user.id }).getOne()
    if (!row || !row.active || !(await verifyPassword(password, row.passwordHash))) {
      throw new AppError('wrong_password', 'The password is not correct, so nothing was signed', 400, { password: 'Password is incorrect' })
    }
  }

  async sign(user: SessionUser, runId: string, input: SignInput): Promise<SignatureRecord> {
    const image = Buffer.from(input.signatureImage.slice('data:image/png;base64,'.length), 'base64')
    if (image.length < 100 || !image.subarray(0, 8).equals(PNG_MAGIC)) {
      throw new AppError('invalid_signature_image', 'The drawn signature is empty or not a PNG image', 400, { signatureImage: 'Draw your signature' })
    }
    await this.checkPassword(user, input.password)
    const meaning = input.meaning
    const id = await this.db.transaction(async (tx) => {
      const ctx = await this.runs.context(user, runId, tx, true)
      if (meaning === 'performed_by') {
        if (user.role !== 'technician') throw AppError.forbidden('Only a commissioning technician on this project signs as performer')
        if (!EDITABLE_RUN_STATES.includes(ctx.run.state)) throw new AppError('already_signed', `This run is ${ctx.run.state.replace('_', ' ')}; it was signed as performed already`, 409)
      } else {
        if (user.role !== 'owner_rep') throw AppError.forbidden("Only the owner's representative of this project accepts a run")
        if (ctx.run.state !== 'submitted') {
          throw new AppError(ctx.run.state === 'accepted' ? 'already_signed' : 'not_submitted', ctx.run.state === 'accepted' ? 'This run was accepted already' : 'The run must be signed by its performer before it can be accepted', 409)
        }
      }
      const live = await tx.getRepository(Signature).findOneBy({ runId, meaning, voided: false })
      if (live) throw new AppError('already_signed', `This run already carries a "${MEANING_LABELS[meaning]}" signature`, 409)
      const snapshot = await runSnapshot(tx, runId)
      if (snapshot.sha256 !== input.snapshotSha256) {
        throw new AppError('run_changed', 'The run changed after you opened the review; review it again, then sign', 409, { snapshotSha256: 'The run changed since the review' })
      }
      if (meaning === 'performed_by') {
        const review = await this.findings.review(user, runId)
        if (!review.canSign) throw new AppError('not_ready', `The run cannot be signed yet: ${review.blockers[0]}`, 409, { review: review.blockers.join('; ') })
      }
      const now = this.clock()
      const signature = await tx.getRepository(Signature).save({
        signedAt: now,
        runId,
        meaning,
        signerId: user.id,
        printedName: user.displayName,
        role: ROLE_LABELS[user.role],
        timeZone: ctx.project.timeZone,
        imageDataUrl: input.signatureImage,
        snapshotSha256: snapshot.sha256,
      })
      const state = meaning === 'performed_by' ? 'submitted' : 'accepted'
      await tx.query(`UPDATE run SET state = $2, version = version + 1, updated_at = $3 WHERE id = $1`, [runId, state, now])
      await recordAudit(tx, {
        actorId: user.id,
        action: meaning === 'performed_by' ? 'run.sign_performed' : 'run.sign_accepted',
        entityType: 'run',
        entityId: runId,
        projectId: ctx.run.projectId,
        before: { state: ctx.run.state },
        after: { state, signatureId: signature.id, snapshotSha256: snapshot.sha256, meaning },
        occurredAt: now,
      })
      if (meaning === 'performed_by') {
        const reps: { email: string; display_name: string }[] = await tx.query(
          `SELECT u.email, u.display_name FROM project_member m JOIN app_user u ON u.id = m.user_id
            WHERE m.project_id = $1 AND u.role = 'owner_rep' AND u.active`,
          [ctx.run.projectId],
        )
        const review = await this.findings.review(user, runId)
        for (const rep of reps) {
          await this.mail.queue(tx, {
            kind: 'awaiting_acceptance',
            runId,
            to: [rep.email],
            subject: `Start-up of ${ctx.equipment.tag} awaits your acceptance`,
            text: renderMailText('awaiting-acceptance', {
              recipientName: rep.display_name,
              performerName: user.displayName,
              equipmentTag: ctx.equipment.tag,
              templateName: ctx.template.name,
              templateVersion: ctx.version.number,
              projectName: ctx.project.name,
              counts: review.counts,
              openFindings: review.openFindings.length,
              runUrl: `${this.publicUrl}/runs/${runId}/review`,
            }),
          })
        }
      }
      return signature.id
    })
    if (meaning === 'accepted_by' && this.onAccepted) await this.onAccepted(runId)
    const row = await this.db.getRepository(Signature).findOneByOrFail({ id })
    return signatureRecord(row)
  }

  /** The owner's representative sends the run back: the performer's signature is voided (kept) and the technician told. */
  async returnRun(user: SessionUser, runId: string, input: ReturnInput): Promise<void> {
    await this.checkPassword(user, input.password)
    await this.db.transaction(async (tx) => {
      const ctx = await this.runs.context(user, runId, tx, true)
      if (user.role !== 'owner_rep') throw AppError.forbidden("Only the owner's representative of this project returns a run")
      if (ctx.run.state !== 'submitted') throw new AppError('not_submitted', `Only a submitted run can be returned; this one is ${ctx.run.state.replace('_', ' ')}`, 409)
      const performer = await tx.getRepository(Signature).findOneBy({ runId, meaning: 'performed_by', voided: false })
      const now = this.clock()
      if (performer) {
        await tx.getRepository(Signature).update(performer.id, { voided: true, voidedAt: now, voidReason: `Returned by ${user.displayName}: ${input.comments}` })
      }
      await tx.query(`UPDATE run SET state = 'returned', version = version + 1, updated_at = $2 WHERE id = $1`, [runId, now])
      await recordAudit(tx, {
        actorId: user.id,
        action: 'run.return',
        entityType: 'run',
        entityId: runId,
        projectId: ctx.run.projectId,
        before: { state: 'submitted', performerSignatureId: performer?.id ?? null },
        after: { state: 'returned', comments: input.comments, voidedSignatureId: performer?.id ?? null },
        occurredAt: now,
      })
      if (performer) {
        const tech = await tx.getRepository(User).findOneBy({ id: performer.signerId })
        const stillMember = tech && (await tx.getRepository(ProjectMember).existsBy({ projectId: ctx.run.projectId, userId: tech.id }))
        if (tech?.active && stillMember) {
          await this.mail.queue(tx, {
            kind: 'run_returned',
            runId,
            to: [tech.email],
            subject: `Start-up of ${ctx.equipment.tag} was returned with comments`,
            text: renderMailText('run-returned', {
              recipientName: tech.displayName,
              ownerRepName: user.displayName,
              equipmentTag: ctx.equipment.tag,
              projectName: ctx.project.name,
              comments: input.comments,
              runUrl: `${this.publicUrl}/runs/${runId}`,
            }),
          })
        }
      }
    })
  }
}
