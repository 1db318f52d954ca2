import type { DataSource, EntityManager } from 'typeorm'
import { STARTER_LIBRARY } from '@shared/library'
import { ChecklistTemplate, Organization, TemplateVersion } from '../entities'
import { recordAudit } from './audit.service'
import { requireValidDefinition } from './template.service'

/**
 * Publishes a newer revision of a starter template as the next version of the firm's template, when the firm's newest
 * version is an older revision of the starter as installed (not a version the firm wrote, and no draft in progress).
 * Runs pinned to the older version keep it. Returns whether a version was added.
 */
async function upgradeStarter(manager: EntityManager, template: ChecklistTemplate, starter: (typeof STARTER_LIBRARY)[number], publishedBy: string | null, at: Date): Promise<boolean> {
  const latest = await manager.getRepository(TemplateVersion).findOne({ where: { templateId: template.id }, order: { number: 'DESC' } })
  if (!latest || latest.status !== 'published' || latest.starterRevision === null || latest.starterRevision >= starter.revision) return false
  const definition = await requireValidDefinition(starter.definition)
  const version = await manager.getRepository(TemplateVersion).save({
    templateId: template.id,
    number: latest.number + 1,
    status: 'published' as const,
    definition: definition as unknown as Record<string, unknown>,
    changelog: starter.revisionNote,
    starterRevision: starter.revision,
    createdBy: publishedBy,
    publishedBy,
    publishedAt: at,
    createdAt: at,
    updatedAt: at,
  })
  await recordAudit(manager, {
    actorId: publishedBy,
    action: 'template.starter_upgrade',
    entityType: 'template_version',
    entityId: version.id,
    before: { number: latest.number, starterRevision: latest.starterRevision },
    after: { key: starter.key, number: version.number, starterRevision: starter.revision },
    occurredAt: at,
  })
  return true
}

/**
 * Gives an organisation every starter template it does not have yet (matched by key), each as published version 1,
 * and a newer revision of one it has as its next version (`upgradeStarter`). A template the firm has edited or
 * retired is left as it is. Returns how many versions were added.
 */
export async function installStarterLibrary(manager: EntityManager, organizationId: string, publishedBy: string | null, at: Date = new Date()): Promise<number> {
  let added = 0
  for (const starter of STARTER_LIBRARY) {
    const existing = await manager.getRepository(ChecklistTemplate).findOneBy({ organizationId, key: starter.key })
    if (existing) {
      if ((await upgradeStarter(manager, existing, starter, publishedBy, at))) added += 1
      continue
    }
    const definition = await requireValidDefinition(starter.definition)
    const template = await manager.getRepository(ChecklistTemplate).save({
      organizationId,
      key: starter.key,
      name: starter.name,
      equipmentKind: starter.equipmentKind,
      description: starter.description,
      createdAt: at,
      updatedAt: at,
    })
    const now = at
    const version = await manager.getRepository(TemplateVersion).save({
      templateId: template.id,
      number: 1,
      status: 'published' as const,
      definition: definition as unknown as Record<string, unknown>,
      changelog: starter.changelog,
      starterRevision: starter.revision,
      createdBy: publishedBy,
      publishedBy,
      publishedAt: now,
      createdAt: now,
      updatedAt: now,
    })
    await recordAudit(manager, {
      actorId: publishedBy,
      action: 'template.starter_install',
      entityType: 'template_version',
      entityId: version.id,
      after: { key: starter.key, number: 1, starterRevision: starter.revision },
      occurredAt: now,
    })
    added += 1
  }
  return added
}

/** Makes the starter library available to every organisation, at each start (new organisations get it at once). */
export async function ensureStarterLibrary(db: DataSource): Promise<number> {
  const organizations = await db.getRepository(Organization).find()
  let added = 0
  for (const org of organizations) {
    added += await db.transaction((tx) => installStarterLibrary(tx, org.id, null))
  }
  return added
}
