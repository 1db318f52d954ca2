import type { DataSource, EntityManager } from 'typeorm'
import { STARTER_LIBRARY } from '@shared/library'
import { ChecklistTemplate, Organization, TemplateVersion } from '../entities'
import { recordAudit } from './audit.service'
import { requireValidDefinition } from './template.service'

/**
 * Gives an organisation every starter template it does not have yet (matched by key), each as published version 1.
 * A template the firm already has under that key, edited or retired, is left as it is. Returns how many were added.
 */
export async function installStarterLibrary(manager: EntityManager, organizationId: string, publishedBy: string | null, at: Date = new Date()): Promise<number> {
  let added = 0
  for (const starter of STARTER_LIBRARY) {
    if (await manager.getRepository(ChecklistTemplate).existsBy({ organizationId, key: starter.key })) continue
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
      after: { key: starter.key, number: 1 },
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
