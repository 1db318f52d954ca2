import { DataSource } from 'typeorm'
import { fileTypeFromBuffer } from 'file-type'
import type { CloseoutDocumentInput } from '@shared/schemas/archive'
import type { CloseoutDocument as CloseoutDocumentView } from '@shared/types/archive'
import type { SessionUser } from '@shared/types/api'
import { AppError } from '../errors/app-error'
import { Attachment, CloseoutDocument, Project } from '../entities'
import type { StorageService } from '../storage/storage'
import { recordAudit } from './audit.service'
import type { ProjectService } from './project.service'

/** What a closeout document may be, judged from its bytes (the browser's claim is not trusted), with the stored extension. */
export const CLOSEOUT_FILE_TYPES: Record<string, string> = {
  'application/pdf': 'pdf',
  'image/jpeg': 'jpg',
  'image/png': 'png',
  'image/webp': 'webp',
  'application/vnd.openxmlformats-officedocument.wordprocessingml.document': 'docx',
  'application/vnd.openxmlformats-officedocument.spreadsheetml.sheet': 'xlsx',
}
export const CLOSEOUT_FILE_WORDS = 'a PDF, JPEG, PNG, WebP, Word (.docx) or Excel (.xlsx) file'

/** busboy may hand over a UTF-8 file name read as Latin-1 ("Ã\u009cbergabe.pdf"); undo that when it is so, keep the name otherwise. */
function uploadedName(name: string): string {
  if (!/[\u0080-\u00ff]/.test(name) || /[^\u0000-\u00ff]/.test(name)) return name
  const decoded = Buffer.from(name, 'latin1').toString('utf8')
  return decoded.includes('\ufffd') ? name : decoded
}

export function closeoutView(d: CloseoutDocument): CloseoutDocumentView {
  return {
    id: d.id,
    projectId: d.projectId,
    title: d.title,
    category: d.category,
    documentDate: d.documentDate,
    fileName: d.attachment.originalName,
    contentType: d.attachment.mimeType,
    sizeBytes: d.attachment.sizeBytes,
    sha256: d.attachment.sha256,
    uploadedById: d.uploadedById,
    uploadedByName: d.uploadedBy?.displayName ?? '',
    uploadedAt: d.uploadedAt.toISOString(),
    downloadUrl: `/api/closeout-documents/${d.id}/file`,
  }
}

/** Handover files of a project: attached by contractors and admins, read by every member, never changed or deleted. */
export class CloseoutService {
  constructor(
    private readonly db: DataSource,
    private readonly projects: ProjectService,
    private readonly storage: StorageService,
  ) {}

  async list(projectIds: string[]): Promise<CloseoutDocument[]> {
    if (!projectIds.length) return []
    return this.db
      .getRepository(CloseoutDocument)
      .createQueryBuilder('d')
      .innerJoinAndSelect('d.attachment', 'a')
      .leftJoinAndSelect('d.uploadedBy', 'u')
      .where('d.project_id = ANY(:ids)', { ids: projectIds })
      .orderBy('d.document_date', 'DESC')
      .addOrderBy('d.uploaded_at', 'DESC')
      .getMany()
  }

  /** Only contractors who are members of the project, and the firm's admins, attach documents. */
  async add(user: SessionUser, projectId: string, input: CloseoutDocumentInput, file: { buffer: Buffer; originalname: string }): Promise<CloseoutDocumentView> {
    if (user.role !== 'admin' && user.role !== 'contractor') throw AppError.forbidden('Only contractors and admins attach closeout documents')
    if (!file.buffer.length) throw new AppError('missing_file', 'The file is empty', 400, { file: 'The file is empty' })
    const detected = await fileTypeFromBuffer(file.buffer)
    const extension = detected ? CLOSEOUT_FILE_TYPES[detected.mime] : undefined
    if (!detected || !extension) {
      throw new AppError('unsupported_file', `A closeout document must be ${CLOSEOUT_FILE_WORDS}`, 415, { file: `Not ${CLOSEOUT_FILE_WORDS}` })
    }
    const project = await this.db.getRepository(Project).findOneByOrFail({ id: projectId })
    const stored = await this.storage.save(file.buffer, 'closeout', extension)
    const name = uploadedName(file.originalname).replace(/[\\/\0]/g, '_').slice(0, 200) || `document.${extension}`
    const id = await this.db.transaction(async (tx) => {
      const attachment = await tx.getRepository(Attachment).save({
        organizationId: project.organizationId,
        storageKey: stored.key,
        sha256: stored.sha256,
        mimeType: detected.mime,
        sizeBytes: stored.size,
        originalName: name,
        uploadedBy: user.id,
      })
      const doc = await tx.getRepository(CloseoutDocument).save({
        projectId,
        attachmentId: attachment.id,
        title: input.title,
        category: input.category,
        documentDate: input.documentDate,
        uploadedById: user.id,
      })
      await recordAudit(tx, {
        actorId: user.id,
        action: 'closeout.attach',
        entityType: 'closeout_document',
        entityId: doc.id,
        projectId,
        after: { title: input.title, category: input.category, documentDate: input.documentDate, fileName: name, sha256: stored.sha256, sizeBytes: stored.size },
      })
      return doc.id
    })
    const [saved] = (await this.list([projectId])).filter((d) => d.id === id)
    return closeoutView(saved)
  }

  /** A document the person may read (member of its project, or admin of the firm); others get 404. */
  async findAccessible(user: SessionUser, documentId: string): Promise<CloseoutDocument> {
    const doc = await this.db.getRepository(CloseoutDocument).findOne({ where: { id: documentId }, relations: { attachment: true, uploadedBy: true } })
    if (!doc || !(await this.projects.canAccess(user, doc.projectId))) throw AppError.notFound('Closeout document')
    return doc
  }

  /** The file's bytes, proven against the recorded SHA-256. */
  async file(doc: CloseoutDocument): Promise<Buffer> {
    return this.storage.read(doc.attachment.storageKey, doc.attachment.sha256)
  }
}
