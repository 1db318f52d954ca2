import sharp from 'sharp'
import type { DataSource, EntityManager } from 'typeorm'
import type { ReturnInput, SignInput } from '@shared/schemas/run'
import type { SessionUser } from '@shared/types/api'
import { ROLE_LABELS } from '@shared/types/roles'
import type { SignatureRecord } from '@shared/types/report'
import { EDITABLE_RUN_STATES } from '@shared/types/run'
import { blockingFindings, countRunRecord, describeSnapshotChanges, exceptionsOf, inkShare, MEANING_LABELS, MIN_INK_SHARE, SEPARATION_OF_DUTIES, signatureRecord } from '@shared/record'
import { verifyPassword } from '../auth/passwords'
import { AppError } from '../errors/app-error'
import { ProjectMember, Signature, User } from '../entities'
import type { MailService } from '../mail/mail.service'
import { renderMailText } from '../mail/mail.service'
import { recordAudit } from './audit.service'
import { systemClock, type Clock } from './clock'
import type { FindingService } from './finding.service'
import type { ReportService } from './report.service'
import type { RunService } from './run.service'
import { keep, keptSnapshot, liveSnapshot, signedSnapshotHash, storeSnapshot } from './run-record'

const PNG_MAGIC = Buffer.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a])
const MAX_PAD_PIXELS = 4_000_000

/** Refuses a drawing that is not a PNG, or a pad with (almost) no ink on it. */
export async function assertDrawnSignature(dataUrl: string): Promise<void> {
  const image = Buffer.from(dataUrl.slice('data:image/png;base64,'.length), 'base64')
  const draw = { signatureImage: 'Draw your signature in the box, then sign' }
  if (image.length < 60 || !image.subarray(0, 8).equals(PNG_MAGIC)) throw new AppError('invalid_signature_image', 'The drawn signature is empty or not a PNG image', 400, draw)
  let share: number
  try {
    const { data, info } = await sharp(image, { limitInputPixels: MAX_PAD_PIXELS }).ensureAlpha().raw().toBuffer({ resolveWithObject: true })
    share = inkShare(data, info.width, info.height)
  } catch {
    throw new AppError('invalid_signature_image', 'The drawn signature could not be read as a PNG image', 400, draw)
  }
  if (share < MIN_INK_SHARE) {
    const what = share === 0 ? 'The signature pad is blank' : 'Too little is drawn for a signature'
    throw new AppError(
      'blank_signature',
      `${what}: draw your signature (at least ${(MIN_INK_SHARE * 100).toFixed(1)} % of the pad must carry ink; this drawing has ${(share * 100).toFixed(2)} %)`,
      400,
      draw,
    )
  }
}

export interface SigningDeps {
  runs: Pick<RunService, 'context'>
  findings: Pick<FindingService, 'review'>
  mail: MailService
  reports: Pick<ReportService, 'issueInTransaction' | 'requestRender'>
  publicUrl: string
  clock?: Clock
}

/**
 * Sign-off: the performer signs the run's snapshot (which is then kept, and is the record from there on); a different
 * person, the owner's representative, accepts that same snapshot or returns the run with comments. Acceptance issues
 * the report (its row and number) in the same transaction; rendering is queued after commit.
 */
export class SigningService {
  private readonly clock: Clock

  constructor(
    private readonly db: DataSource,
    private readonly deps: SigningDeps,
  ) {
    this.clock = deps.clock ?? systemClock
  }

  async list(runId: string, manager: EntityManager = this.db.manager): Promise<SignatureRecord[]> {
    const rows = await manager.getRepository(Signature).find({ where: { runId }, order: { signedAt: 'ASC', id: 'ASC' } })
    return rows.map(signatureRecord)
  }

  private async checkPassword(user: SessionUser, password: string) {
    const row = await this.db.getRepository(User).createQueryBuilder('u').addSelect('u.passwordHash').where('u.id = :id', { id: user.id }).getOne()
    if (!row || !row.active || !(await verifyPassword(password, row.passwordHash))) {
      throw new AppError('wrong_password', 'The password is not correct, so nothing was signed', 400, { password: 'Password is incorrect' })
    }
  }

  async sign(user: SessionUser, runId: string, input: SignInput): Promise<SignatureRecord> {
    // The run is looked up first: a run one may not see is 404 whatever the password.
    await this.deps.runs.context(user, runId)
    await assertDrawnSignature(input.signatureImage)
    await this.checkPassword(user, input.password)
    const meaning = input.meaning
    const outcome = await this.db.transaction(async (tx) => {
      const ctx = await this.deps.runs.context(user, runId, tx, true)
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

      let snapshotSha256: string
      let acknowledgedExceptions: string[] | null = null
      if (meaning === 'performed_by') {
        const now = keep(await liveSnapshot(tx, runId))
        if (now.sha256 !== input.snapshotSha256) {
          throw new AppError('run_changed', 'The run changed after you opened the review; review it again, then sign', 409, { snapshotSha256: 'The run changed since the review' })
        }
        const review = await this.deps.findings.review(user, runId, tx)
        if (!review.canSign) throw new AppError('not_ready', `The run cannot be signed yet: ${review.blockers[0]}`, 409, { review: review.blockers.join('; ') })
        await storeSnapshot(tx, runId, now, user.id)
        snapshotSha256 = now.sha256
      } else {
        const performer = await tx.getRepository(Signature).findOneByOrFail({ runId, meaning: 'performed_by', voided: false })
        if (performer.signerId === user.id) throw new AppError('same_person', SEPARATION_OF_DUTIES, 409, { meaning: 'Another person must accept this run' })
        if (input.snapshotSha256 !== performer.snapshotSha256) {
          throw new AppError('snapshot_mismatch', 'What you reviewed is not the snapshot the performer signed; open the review again, then accept', 409, { snapshotSha256: 'Not the snapshot the performer signed' })
        }
        const signed = await keptSnapshot(tx, runId, performer.snapshotSha256)
        const now = keep(await liveSnapshot(tx, runId))
        if (now.sha256 !== signed.sha256) {
          const changes = describeSnapshotChanges(signed.snapshot, now.snapshot)
          throw new AppError(
            'changed_since_signed',
            `The run is no longer what ${performer.printedName} signed: ${changes.join('; ') || 'its record'} changed since. The performer must review and sign again before it can be accepted.`,
            409,
            { snapshotSha256: 'Changed since the performer signed' },
            { changes },
          )
        }
        snapshotSha256 = signed.sha256
        // Accepted with exceptions: every open item is acknowledged by id; a critical finding waits for its resolution.
        const count = countRunRecord(signed.snapshot)
        const critical = blockingFindings(signed.snapshot.findings)
        if (critical.length) {
          throw new AppError(
            'critical_findings_open',
            `A critical finding is open (${critical.map((f) => f.description).join('; ')}): it blocks acceptance until it is resolved and the run signed again`,
            409,
            { acknowledgedExceptions: 'A critical finding is open' },
          )
        }
        const exceptions = exceptionsOf(signed.snapshot, count)
        const acknowledged = new Set(input.acknowledgedExceptions ?? [])
        const missing = exceptions.filter((e) => !acknowledged.has(e.id))
        const unknown = [...acknowledged].filter((id) => !exceptions.some((e) => e.id === id))
        if (missing.length || unknown.length) {
          throw new AppError(
            'exceptions_not_acknowledged',
            missing.length
              ? `Acknowledge each exception before accepting: ${missing.map((e) => e.where).join('; ')}`
              : `These are not exceptions of this run: ${unknown.join(', ')}; open the review again`,
            409,
            { acknowledgedExceptions: missing.length ? `${missing.length} exception${missing.length === 1 ? '' : 's'} not acknowledged` : 'Not exceptions of this run' },
            { exceptions },
          )
        }
        acknowledgedExceptions = exceptions.map((e) => e.id)
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
        snapshotSha256,
        acknowledgedExceptions,
      })
      const state = meaning === 'performed_by' ? 'submitted' : 'accepted'
      await recordAudit(tx, {
        actorId: user.id,
        action: meaning === 'performed_by' ? 'run.sign_performed' : 'run.sign_accepted',
        entityType: 'run',
        entityId: runId,
        projectId: ctx.run.projectId,
        before: { state: ctx.run.state },
        after: { state, signatureId: signature.id, snapshotSha256, meaning, ...(acknowledgedExceptions ? { acknowledgedExceptions } : {}) },
        occurredAt: now,
      })
      let reportId: string | null = null
      if (meaning === 'accepted_by') {
        // The report row and its number are part of the acceptance: both commit, or neither.
        reportId = (await this.deps.reports.issueInTransaction(tx, runId, snapshotSha256, now)).id
      }
      await tx.query(`UPDATE run SET state = $2, version = version + 1, revision = revision + 1, updated_at = $3 WHERE id = $1`, [runId, state, now])
      if (meaning === 'performed_by') await this.notifyOwnerReps(tx, user, runId, ctx)
      return { signature, reportId }
    })
    // After commit: a render job. If the queue is unreachable now, the periodic sweep finds the pending report.
    if (outcome.reportId) await this.deps.reports.requestRender(outcome.reportId)
    return signatureRecord(outcome.signature)
  }

  private async notifyOwnerReps(tx: EntityManager, user: SessionUser, runId: string, ctx: Awaited<ReturnType<RunService['context']>>) {
    const reps: { email: string; display_name: string }[] = await tx.query(
      `SELECT u.email, u.display_name FROM project_member m JOIN app_user u ON u.id = m.user_id
        WHERE m.project_id = $1 AND u.role = 'owner_rep' AND u.active AND u.id <> $2`,
      [ctx.run.projectId, user.id],
    )
    if (!reps.length) return
    const review = await this.deps.findings.review(user, runId, tx)
    for (const rep of reps) {
      await this.deps.mail.queue(tx, {
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
          runUrl: `${this.deps.publicUrl}/runs/${runId}/review`,
        }),
      })
    }
  }

  /** The owner's representative sends the run back: the performer's signature is voided (kept) and the technician told. */
  async returnRun(user: SessionUser, runId: string, input: ReturnInput): Promise<void> {
    await this.deps.runs.context(user, runId)
    await this.checkPassword(user, input.password)
    await this.db.transaction(async (tx) => {
      const ctx = await this.deps.runs.context(user, runId, tx, true)
      if (user.role !== 'owner_rep') throw AppError.forbidden("Only the owner's representative of this project returns a run")
      if (ctx.run.state !== 'submitted') throw new AppError('not_submitted', `Only a submitted run can be returned; this one is ${ctx.run.state.replace('_', ' ')}`, 409)
      const performer = await tx.getRepository(Signature).findOneBy({ runId, meaning: 'performed_by', voided: false })
      const now = this.clock()
      if (performer) {
        await tx.getRepository(Signature).update(performer.id, { voided: true, voidedAt: now, voidReason: `Returned by ${user.displayName}: ${input.comments}` })
      }
      await tx.query(`UPDATE run SET state = 'returned', version = version + 1, revision = revision + 1, updated_at = $2 WHERE id = $1`, [runId, now])
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
          await this.deps.mail.queue(tx, {
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
              runUrl: `${this.deps.publicUrl}/runs/${runId}`,
            }),
          })
        }
      }
    })
  }

  /** The hash a submitted or accepted run was signed with (null while it is being filled in). */
  async signedHash(runId: string): Promise<string | null> {
    return signedSnapshotHash(this.db.manager, runId)
  }
}
