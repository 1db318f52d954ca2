import { DataSource } from 'typeorm'
import { fileTypeFromBuffer } from 'file-type'
import type { AttachmentSummary, EquipmentDetail, EquipmentSummary, SessionUser } from '@shared/types/api'
import type { DesignChangeOutcome } from '@shared/types/design-change'
import type { EquipmentCreateInput, EquipmentUpdateInput } from '@shared/schemas/equipment'
import { canonicalDesignPoint } from '@shared/format/design-point'
import { AppError } from '../errors/app-error'
import { Attachment, Equipment, Project } from '../entities'
import type { StorageService } from '../storage/storage'
import { recordAudit } from './audit.service'
import { applyDesignChange, EQUIPMENT_IDENTITY, identityKeys, lockOpenRuns, requireConfirmation } from './design-change'
import { changedKeys, editConflict } from './edit-conflict'
import type { ProjectService } from './project.service'
import type { Actor } from './user.service'

export const NAMEPLATE_IMAGE_TYPES: Record<string, string> = { 'image/jpeg': 'jpg', 'image/png': 'png', 'image/webp': 'webp' }

function attachmentSummary(a: Attachment): AttachmentSummary {
  return { id: a.id, sha256: a.sha256, mimeType: a.mimeType, sizeBytes: a.sizeBytes, originalName: a.originalName, createdAt: a.createdAt.toISOString() }
}

function summary(e: Equipment): EquipmentSummary {
  return {
    id: e.id,
    projectId: e.projectId,
    tag: e.tag,
    kind: e.kind,
    location: e.location,
    manufacturer: e.manufacturer,
    model: e.model,
    serialNumber: e.serialNumber,
    yearBuilt: e.yearBuilt,
    refrigerant: e.refrigerant,
    hasNameplatePhoto: e.nameplatePhotoId !== null,
    updatedAt: e.updatedAt.toISOString(),
    version: e.version,
  }
}

/** What the edit form changes, with words for "Sam changed the serial number at 14:02 UTC". */
const EQUIPMENT_LABELS: Record<string, string> = { ...EQUIPMENT_IDENTITY, notes: 'notes' }
type EditableFields = Pick<Equipment, 'tag' | 'location' | 'manufacturer' | 'model' | 'serialNumber' | 'yearBuilt' | 'notes' | 'designPoint'>

function editable(e: Equipment): EditableFields {
  return { tag: e.tag, location: e.location, manufacturer: e.manufacturer, model: e.model, serialNumber: e.serialNumber, yearBuilt: e.yearBuilt, notes: e.notes, designPoint: e.designPoint }
}

function snapshot(e: Equipment) {
  const { id: _id, createdAt: _c, updatedAt: _u, project: _p, nameplatePhoto: _n, ...rest } = e
  return rest as unknown as Record<string, unknown>
}

/** Equipment on projects: nameplate, design point (stored in SI) and the nameplate photo. */
export class EquipmentService {
  constructor(
    private readonly db: DataSource,
    private readonly projects: ProjectService,
    private readonly storage: StorageService,
  ) {}

  /** The equipment item if `user` may see its project; 404 otherwise, so other projects' items stay invisible. */
  async findAccessible(user: SessionUser, equipmentId: string): Promise<Equipment> {
    const equipment = await this.db.getRepository(Equipment).findOne({ where: { id: equipmentId }, relations: { nameplatePhoto: true } })
    if (!equipment || !(await this.projects.canAccess(user, equipment.projectId))) throw AppError.notFound('Equipment')
    return equipment
  }

  async list(projectId: string): Promise<EquipmentSummary[]> {
    const rows = await this.db.getRepository(Equipment).find({ where: { projectId }, order: { tag: 'ASC' } })
    return rows.map(summary)
  }

  detail(e: Equipment): EquipmentDetail {
    return { ...summary(e), designPoint: e.designPoint, notes: e.notes, nameplatePhoto: e.nameplatePhoto ? attachmentSummary(e.nameplatePhoto) : null }
  }

  private async assertTagFree(projectId: string, tag: string, exceptId?: string) {
    const existing = await this.db.getRepository(Equipment).findOneBy({ projectId, tag })
    if (existing && existing.id !== exceptId) {
      throw new AppError('tag_taken', `Tag ${tag} is already used on this project`, 409, { tag: 'This tag is already used on this project' })
    }
  }

  async create(projectId: string, input: EquipmentCreateInput, actor: Actor): Promise<EquipmentDetail> {
    const project = await this.db.getRepository(Project).findOneBy({ id: projectId })
    if (project?.closedAt) throw new AppError('project_closed', `Project ${project.code} is closed; reopen it before adding equipment`, 409)
    await this.assertTagFree(projectId, input.tag)
    const designPoint = canonicalDesignPoint(input.designPoint as Record<string, unknown>)
    const saved = await this.db.transaction(async (tx) => {
      const equipment = await tx.getRepository(Equipment).save({
        projectId,
        tag: input.tag,
        kind: input.kind,
        location: input.location ?? '',
        manufacturer: input.manufacturer,
        model: input.model,
        serialNumber: input.serialNumber,
        yearBuilt: input.yearBuilt ?? null,
        notes: input.notes ?? '',
        refrigerant: typeof designPoint.refrigerant === 'string' ? designPoint.refrigerant : null,
        designPoint,
        nameplatePhotoId: null,
      })
      await recordAudit(tx, { actorId: actor.id, action: 'equipment.create', entityType: 'equipment', entityId: equipment.id, projectId, after: snapshot(equipment), ip: actor.ip })
      return equipment
    })
    return this.detail({ ...saved, nameplatePhoto: null } as Equipment)
  }

  /** The item with the tags its issued reports print, where those differ from its tag now. */
  async detailWithHistory(e: Equipment): Promise<EquipmentDetail> {
    const rows: { tag: string }[] = await this.db.query(
      `SELECT DISTINCT equipment_tag AS tag FROM report WHERE equipment_id = $1 AND equipment_tag IS NOT NULL AND equipment_tag <> $2 ORDER BY 1`,
      [e.id, e.tag],
    )
    return { ...this.detail(e), formerTags: rows.map((r) => r.tag) }
  }

  private async fresh(id: string): Promise<EquipmentDetail> {
    return this.detailWithHistory(await this.db.getRepository(Equipment).findOneOrFail({ where: { id }, relations: { nameplatePhoto: true } }))
  }

  /**
   * Edits an item on the version the edit was made on (409 `edit_conflict` when someone changed it since; an edit that
   * changes nothing is accepted as it is). A change of its tag, nameplate or design point reaches its runs: runs in
   * progress are re-judged, submitted ones need `confirmVoid` (409 `affects_signed_runs` names them) and then lose the
   * performer's signature and go back to the technician. Accepted runs are not touched.
   */
  async update(equipment: Equipment, input: EquipmentUpdateInput, actor: Actor, links: { publicUrl?: string | null } = {}): Promise<{ equipment: EquipmentDetail; runs: DesignChangeOutcome }> {
    const runs = await this.db.transaction(async (tx) => {
      const row = await tx.getRepository(Equipment).findOne({ where: { id: equipment.id }, lock: { mode: 'pessimistic_write' } })
      if (!row) throw AppError.notFound('Equipment')
      const { version, confirmVoid, designPoint, ...plain } = input
      const before = editable(row)
      const after: EditableFields = { ...before }
      for (const [key, value] of Object.entries(plain)) {
        if (value !== undefined) (after as unknown as Record<string, unknown>)[key] = value
      }
      if (designPoint !== undefined) after.designPoint = canonicalDesignPoint(designPoint as Record<string, unknown>)
      const changed = changedKeys(before, after)
      const none: DesignChangeOutcome = { rejudged: [], voided: [] }
      if (!changed.length) return none
      if (row.version !== version) {
        throw await editConflict(tx, { entityType: 'equipment', entityId: row.id, actions: ['equipment.update'], labels: EQUIPMENT_LABELS, thing: row.tag, viewerId: actor.id, current: await this.fresh(row.id) })
      }
      if (changed.includes('tag')) await this.assertTagFree(row.projectId, after.tag, row.id)
      const keys = identityKeys(before, after, EQUIPMENT_IDENTITY)
      const change = {
        cause: 'equipment.update' as const,
        scope: { equipmentId: row.id },
        subject: row.tag,
        keys,
        labels: EQUIPMENT_IDENTITY,
        before: Object.fromEntries(keys.map((k) => [k, (before as unknown as Record<string, unknown>)[k]])),
        after: Object.fromEntries(keys.map((k) => [k, (after as unknown as Record<string, unknown>)[k]])),
        actor,
        publicUrl: links.publicUrl ?? null,
      }
      const open = keys.length ? await lockOpenRuns(tx, { equipmentId: row.id }) : []
      requireConfirmation(open, confirmVoid, change)
      const auditBefore = snapshot(row)
      Object.assign(row, after, {
        refrigerant: typeof after.designPoint.refrigerant === 'string' ? after.designPoint.refrigerant : null,
        version: row.version + 1,
      })
      await tx.getRepository(Equipment).save(row)
      await recordAudit(tx, { actorId: actor.id, action: 'equipment.update', entityType: 'equipment', entityId: row.id, projectId: row.projectId, before: auditBefore, after: snapshot(row), ip: actor.ip })
      return open.length ? applyDesignChange(tx, open, change) : none
    })
    return { equipment: await this.fresh(equipment.id), runs }
  }

  /** Removes an equipment item; one that runs refer to is refused by the database's foreign keys (409). */
  async remove(equipment: Equipment, actor: Actor): Promise<void> {
    await this.db.transaction(async (tx) => {
      await tx.getRepository(Equipment).delete({ id: equipment.id })
      await recordAudit(tx, { actorId: actor.id, action: 'equipment.delete', entityType: 'equipment', entityId: equipment.id, projectId: equipment.projectId, before: snapshot(equipment), ip: actor.ip })
    })
  }

  /** Stores a nameplate photo after checking its bytes really are an image of an accepted type. */
  async setNameplatePhoto(equipment: Equipment, file: { buffer: Buffer; originalname: string }, actor: Actor): Promise<EquipmentDetail> {
    const detected = await fileTypeFromBuffer(file.buffer)
    const extension = detected ? NAMEPLATE_IMAGE_TYPES[detected.mime] : undefined
    if (!detected || !extension) {
      throw new AppError('unsupported_file', 'The nameplate photo must be a JPEG, PNG or WebP image', 415, { photo: 'Not a JPEG, PNG or WebP image' })
    }
    const stored = await this.storage.save(file.buffer, 'nameplates', extension)
    const project = await this.db.getRepository(Project).findOneByOrFail({ id: equipment.projectId })
    await this.db.transaction(async (tx) => {
      const attachment = await tx.getRepository(Attachment).save({
        organizationId: project.organizationId,
        storageKey: stored.key,
        sha256: stored.sha256,
        mimeType: detected.mime,
        sizeBytes: stored.size,
        originalName: file.originalname.slice(0, 200) || `nameplate.${extension}`,
        uploadedBy: actor.id,
      })
      const before = { nameplatePhotoId: equipment.nameplatePhotoId }
      await tx.getRepository(Equipment).update(equipment.id, { nameplatePhotoId: attachment.id })
      await recordAudit(tx, {
        actorId: actor.id,
        action: 'equipment.nameplate_photo',
        entityType: 'equipment',
        entityId: equipment.id,
        projectId: equipment.projectId,
        before,
        after: { nameplatePhotoId: attachment.id, sha256: stored.sha256, sizeBytes: stored.size },
        ip: actor.ip,
      })
    })
    const fresh = await this.db.getRepository(Equipment).findOneOrFail({ where: { id: equipment.id }, relations: { nameplatePhoto: true } })
    return this.detail(fresh)
  }

  /** The photo's bytes, checked against the SHA-256 recorded at upload. */
  async nameplatePhoto(equipment: Equipment): Promise<{ data: Buffer; attachment: Attachment }> {
    const attachment = equipment.nameplatePhoto
    if (!attachment) throw AppError.notFound('Nameplate photo')
    const data = await this.storage.read(attachment.storageKey, attachment.sha256)
    return { data, attachment }
  }
}
