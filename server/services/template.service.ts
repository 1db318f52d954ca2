import { isDeepStrictEqual } from 'node:util'
import { DataSource, In, type EntityManager } from 'typeorm'
import type { SessionUser, TemplateDetail, TemplateSummary, TemplateVersionDetail, TemplateVersionSummary, ValidationIssue } from '@shared/types/api'
import { validateChecklistDefinition, type ChecklistDefinition } from '@shared/schemas/checklist'
import type { TemplateCreateInput, TemplateUpdateInput } from '@shared/schemas/template'
import { diffDefinitions, type DefinitionDiff } from '@shared/templates'
import { AppError } from '../errors/app-error'
import { ChecklistTemplate, TemplateVersion, User } from '../entities'
import { recordAudit } from './audit.service'
import { editConflict } from './edit-conflict'
import type { Actor } from './user.service'

type Def = { sections?: Array<{ steps?: Array<{ fields?: unknown[] }> }> }

function counts(definition: unknown) {
  const sections = Array.isArray((definition as Def)?.sections) ? (definition as Def).sections! : []
  const steps = sections.flatMap((s) => (Array.isArray(s?.steps) ? s.steps : []))
  const fields = steps.flatMap((s) => (Array.isArray(s?.fields) ? s.fields : []))
  return { sectionCount: sections.length, stepCount: steps.length, fieldCount: fields.length }
}

/** A definition a new template starts from: one inspection step with one yes/no check. */
export function minimalDefinition(title: string): ChecklistDefinition {
  return {
    title,
    unitSystem: 'IP',
    sections: [
      {
        id: 'pre-start',
        title: 'Pre-start inspection',
        steps: [
          {
            id: 'general',
            title: 'General inspection',
            fields: [{ id: 'installationComplete', label: 'Installation complete and area clear', kind: 'yes_no', required: true, rule: { type: 'yes_no', expected: true } }],
          },
        ],
      },
    ],
  } as unknown as ChecklistDefinition
}

function issuesToFields(errors: ValidationIssue[]): Record<string, string> {
  const fields: Record<string, string> = {}
  for (const e of errors) fields[e.path || 'definition'] ??= e.message
  return fields
}

/** Validates a definition; throws 400 `invalid_definition` listing every problem by path. */
export async function requireValidDefinition(definition: unknown): Promise<ChecklistDefinition> {
  const result = await validateChecklistDefinition(definition)
  if (!result.valid) {
    const n = result.errors.length
    throw new AppError('invalid_definition', `The checklist definition has ${n} problem${n === 1 ? '' : 's'}: ${result.errors[0].message}`, 400, issuesToFields(result.errors))
  }
  return result.value!
}

/** The template library: versions are drafted, validated, published (frozen) and retired; published ones never change. */
export class TemplateService {
  constructor(private readonly db: DataSource) {}

  private async orgOf(user: SessionUser, manager: EntityManager = this.db.manager): Promise<string> {
    const me = await manager.getRepository(User).findOneByOrFail({ id: user.id })
    return me.organizationId
  }

  private async names(ids: (string | null)[]): Promise<Map<string, string>> {
    const wanted = [...new Set(ids.filter((x): x is string => Boolean(x)))]
    if (!wanted.length) return new Map()
    const users = await this.db.getRepository(User).findBy({ id: In(wanted) })
    return new Map(users.map((u) => [u.id, u.displayName]))
  }

  private versionSummary(v: TemplateVersion, names: Map<string, string>): TemplateVersionSummary {
    return {
      id: v.id,
      templateId: v.templateId,
      number: v.number,
      status: v.status,
      changelog: v.changelog,
      createdAt: v.createdAt.toISOString(),
      createdByName: v.createdBy ? (names.get(v.createdBy) ?? null) : null,
      updatedAt: v.updatedAt.toISOString(),
      publishedAt: v.publishedAt?.toISOString() ?? null,
      publishedByName: v.publishedBy ? (names.get(v.publishedBy) ?? null) : null,
      retiredAt: v.retiredAt?.toISOString() ?? null,
      ...counts(v.definition),
      version: v.version,
    }
  }

  private summary(t: ChecklistTemplate, versions: TemplateVersion[], admin: boolean): TemplateSummary {
    const visible = admin ? versions : versions.filter((v) => v.status !== 'draft')
    const published = versions.filter((v) => v.status === 'published').map((v) => v.number)
    const draft = versions.find((v) => v.status === 'draft')
    const latest = [t.updatedAt, ...versions.map((v) => v.updatedAt)].reduce((a, b) => (a > b ? a : b))
    return {
      id: t.id,
      key: t.key,
      name: t.name,
      equipmentKind: t.equipmentKind,
      description: t.description,
      latestPublishedNumber: published.length ? Math.max(...published) : null,
      draftNumber: admin && draft ? draft.number : null,
      versionCount: visible.length,
      updatedAt: latest.toISOString(),
    }
  }

  private async findTemplate(user: SessionUser, templateId: string, manager: EntityManager = this.db.manager): Promise<ChecklistTemplate> {
    const organizationId = await this.orgOf(user, manager)
    const template = await manager.getRepository(ChecklistTemplate).findOneBy({ id: templateId, organizationId })
    if (!template) throw AppError.notFound('Template')
    return template
  }

  private async findVersion(user: SessionUser, templateId: string, number: number, manager: EntityManager = this.db.manager, lock = false) {
    const template = await this.findTemplate(user, templateId, manager)
    const version = await manager.getRepository(TemplateVersion).findOne({
      where: { templateId, number },
      ...(lock ? { lock: { mode: 'pessimistic_write' as const } } : {}),
    })
    if (!version || (version.status === 'draft' && user.role !== 'admin')) throw AppError.notFound(`Version ${number} of this template`)
    return { template, version }
  }

  async list(user: SessionUser): Promise<TemplateSummary[]> {
    const organizationId = await this.orgOf(user)
    const templates = await this.db.getRepository(ChecklistTemplate).find({ where: { organizationId }, order: { name: 'ASC' } })
    if (!templates.length) return []
    const versions = await this.db.getRepository(TemplateVersion).findBy({ templateId: In(templates.map((t) => t.id)) })
    return templates
      .map((t) => this.summary(t, versions.filter((v) => v.templateId === t.id), user.role === 'admin'))
      .filter((t) => user.role === 'admin' || t.latestPublishedNumber !== null)
  }

  async get(user: SessionUser, templateId: string): Promise<TemplateDetail> {
    const template = await this.findTemplate(user, templateId)
    const versions = await this.db.getRepository(TemplateVersion).find({ where: { templateId }, order: { number: 'DESC' } })
    const admin = user.role === 'admin'
    const visible = admin ? versions : versions.filter((v) => v.status !== 'draft')
    if (!admin && !visible.length) throw AppError.notFound('Template')
    const names = await this.names(versions.flatMap((v) => [v.createdBy, v.publishedBy]))
    return { ...this.summary(template, versions, admin), versions: visible.map((v) => this.versionSummary(v, names)) }
  }

  async getVersion(user: SessionUser, templateId: string, number: number): Promise<TemplateVersionDetail> {
    const { version } = await this.findVersion(user, templateId, number)
    return this.versionDetail(version)
  }

  private async versionDetail(version: TemplateVersion): Promise<TemplateVersionDetail> {
    const names = await this.names([version.createdBy, version.publishedBy])
    return { ...this.versionSummary(version, names), definition: version.definition }
  }

  async create(input: TemplateCreateInput, actor: SessionUser & Actor): Promise<TemplateDetail> {
    const definition = await requireValidDefinition(input.definition ?? minimalDefinition(input.name))
    const id = await this.db.transaction(async (tx) => {
      const organizationId = await this.orgOf(actor, tx)
      if (await tx.getRepository(ChecklistTemplate).existsBy({ organizationId, key: input.key })) {
        throw new AppError('key_taken', `A template with key ${input.key} already exists`, 409, { key: 'This key is already used by another template' })
      }
      const template = await tx.getRepository(ChecklistTemplate).save({
        organizationId,
        key: input.key,
        name: input.name,
        equipmentKind: input.equipmentKind,
        description: input.description ?? '',
      })
      const version = await tx.getRepository(TemplateVersion).save({
        templateId: template.id,
        number: 1,
        status: 'draft' as const,
        definition: definition as unknown as Record<string, unknown>,
        createdBy: actor.id,
      })
      await recordAudit(tx, {
        actorId: actor.id,
        action: 'template.create',
        entityType: 'checklist_template',
        entityId: template.id,
        after: { key: template.key, name: template.name, equipmentKind: template.equipmentKind, draft: version.number },
        ip: actor.ip,
      })
      return template.id
    })
    return this.get(actor, id)
  }

  async update(templateId: string, input: TemplateUpdateInput, actor: SessionUser & Actor): Promise<TemplateDetail> {
    await this.db.transaction(async (tx) => {
      const template = await this.findTemplate(actor, templateId, tx)
      const before = { name: template.name, description: template.description }
      if (input.name !== undefined) template.name = input.name
      if (input.description !== undefined) template.description = input.description
      await tx.getRepository(ChecklistTemplate).save(template)
      await recordAudit(tx, { actorId: actor.id, action: 'template.update', entityType: 'checklist_template', entityId: templateId, before, after: { name: template.name, description: template.description }, ip: actor.ip })
    })
    return this.get(actor, templateId)
  }

  /** Opens the next draft as a copy of `fromNumber` (default: the newest version). */
  async createDraft(templateId: string, fromNumber: number | undefined, actor: SessionUser & Actor): Promise<TemplateVersionDetail> {
    const version = await this.db.transaction(async (tx) => {
      await this.findTemplate(actor, templateId, tx)
      const repo = tx.getRepository(TemplateVersion)
      // Serialise draft creation per template so two admins cannot both open draft N+1.
      await tx.query(`SELECT id FROM checklist_template WHERE id = $1 FOR UPDATE`, [templateId])
      const existing = await repo.findOneBy({ templateId, status: 'draft' })
      if (existing) {
        throw new AppError('draft_exists', `Version ${existing.number} is already an open draft of this template; edit it or discard it first`, 409)
      }
      const newest = await repo.findOne({ where: { templateId }, order: { number: 'DESC' } })
      const source = fromNumber ? await repo.findOneBy({ templateId, number: fromNumber }) : newest
      if (!source) throw new AppError('not_found', `Version ${fromNumber} of this template was not found`, 404, { fromNumber: 'No such version' })
      const draft = await repo.save({
        templateId,
        number: (newest?.number ?? 0) + 1,
        status: 'draft' as const,
        definition: source.definition,
        createdBy: actor.id,
      })
      await recordAudit(tx, { actorId: actor.id, action: 'template.draft_create', entityType: 'template_version', entityId: draft.id, after: { number: draft.number, from: source.number }, ip: actor.ip })
      return draft
    })
    return this.versionDetail(version)
  }

  /**
   * Saves a draft's whole definition on the draft's `version` the edit was made on: a save made on an older version is
   * refused (409 `edit_conflict` with the draft as it is now); one that changes nothing is accepted as it is.
   */
  async updateDraft(templateId: string, number: number, definition: unknown, version: number, actor: SessionUser & Actor): Promise<TemplateVersionDetail> {
    const valid = await requireValidDefinition(definition)
    const saved = await this.db.transaction(async (tx) => {
      const { version: draft } = await this.findVersion(actor, templateId, number, tx, true)
      if (draft.status !== 'draft') throw frozen(draft)
      if (isDeepStrictEqual(JSON.parse(JSON.stringify(valid)), draft.definition)) return draft
      if (draft.version !== version) {
        throw await editConflict(tx, {
          entityType: 'template_version',
          entityId: draft.id,
          actions: ['template.draft_update'],
          labels: {},
          thing: `draft version ${number}`,
          viewerId: actor.id,
          current: await this.versionDetail(draft),
        })
      }
      const before = counts(draft.definition)
      draft.definition = valid as unknown as Record<string, unknown>
      draft.version += 1
      const saved = await tx.getRepository(TemplateVersion).save(draft)
      await recordAudit(tx, { actorId: actor.id, action: 'template.draft_update', entityType: 'template_version', entityId: draft.id, before: { ...before, version: version }, after: { ...counts(valid), version: saved.version }, ip: actor.ip })
      return saved
    })
    return this.versionDetail(saved)
  }

  async discardDraft(templateId: string, number: number, actor: SessionUser & Actor): Promise<void> {
    await this.db.transaction(async (tx) => {
      const { version } = await this.findVersion(actor, templateId, number, tx, true)
      if (version.status !== 'draft') throw frozen(version)
      const total = await tx.getRepository(TemplateVersion).countBy({ templateId })
      if (total === 1) throw new AppError('only_version', 'This draft is the only version of the template; it cannot be discarded', 409)
      await tx.getRepository(TemplateVersion).delete({ id: version.id })
      await recordAudit(tx, { actorId: actor.id, action: 'template.draft_discard', entityType: 'template_version', entityId: version.id, before: { number }, ip: actor.ip })
    })
  }

  async publish(templateId: string, number: number, changelog: string, actor: SessionUser & Actor): Promise<TemplateVersionDetail> {
    const version = await this.db.transaction(async (tx) => {
      const { version } = await this.findVersion(actor, templateId, number, tx, true)
      if (version.status !== 'draft') throw frozen(version)
      // Validated again: the schema may have grown stricter since the draft was saved.
      const valid = await requireValidDefinition(version.definition)
      version.definition = valid as unknown as Record<string, unknown>
      version.status = 'published'
      version.changelog = changelog
      version.publishedAt = new Date()
      version.publishedBy = actor.id
      const saved = await tx.getRepository(TemplateVersion).save(version)
      await recordAudit(tx, { actorId: actor.id, action: 'template.publish', entityType: 'template_version', entityId: version.id, after: { number, changelog }, ip: actor.ip })
      return saved
    })
    return this.versionDetail(version)
  }

  async retire(templateId: string, number: number, actor: SessionUser & Actor): Promise<TemplateVersionDetail> {
    const version = await this.db.transaction(async (tx) => {
      const { version } = await this.findVersion(actor, templateId, number, tx, true)
      if (version.status !== 'published') {
        throw new AppError('not_published', `Version ${number} is ${version.status}; only a published version can be retired`, 409)
      }
      version.status = 'retired'
      version.retiredAt = new Date()
      version.retiredBy = actor.id
      const saved = await tx.getRepository(TemplateVersion).save(version)
      await recordAudit(tx, { actorId: actor.id, action: 'template.retire', entityType: 'template_version', entityId: version.id, before: { status: 'published' }, after: { status: 'retired' }, ip: actor.ip })
      return saved
    })
    return this.versionDetail(version)
  }

  async diff(user: SessionUser, templateId: string, from: number, to: number): Promise<DefinitionDiff> {
    const [a, b] = await Promise.all([this.findVersion(user, templateId, from), this.findVersion(user, templateId, to)])
    return diffDefinitions(a.version.definition as unknown as ChecklistDefinition, b.version.definition as unknown as ChecklistDefinition)
  }

  /** The newest published version of a template, for starting runs. */
  async latestPublished(templateId: string): Promise<TemplateVersion | null> {
    return this.db.getRepository(TemplateVersion).findOne({ where: { templateId, status: 'published' }, order: { number: 'DESC' } })
  }
}

function frozen(version: TemplateVersion): AppError {
  return new AppError(
    'version_frozen',
    `Version ${version.number} is ${version.status} and can no longer change; open a new draft to edit the template`,
    409,
  )
}

export async function validateDefinition(definition: unknown): Promise<{ valid: boolean; errors: ValidationIssue[] }> {
  const r = await validateChecklistDefinition(definition)
  return { valid: r.valid, errors: r.errors }
}
