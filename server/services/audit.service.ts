import type { EntityManager } from 'typeorm'
import { AuditEvent } from '../entities'

export interface AuditEntry {
  actorId: string | null
  action: string
  entityType: string
  entityId?: string | null
  projectId?: string | null
  before?: Record<string, unknown> | null
  after?: Record<string, unknown> | null
  ip?: string | null
  /** When it happened; the database's now() unless a service with its own clock says otherwise. */
  occurredAt?: Date
}

/** Appends one event to the audit trail inside the caller's transaction (or alone). */
export async function recordAudit(manager: EntityManager, entry: AuditEntry): Promise<void> {
  await manager.save(AuditEvent, manager.create(AuditEvent, {
    actorId: entry.actorId,
    action: entry.action,
    entityType: entry.entityType,
    entityId: entry.entityId ?? null,
    projectId: entry.projectId ?? null,
    before: entry.before ?? null,
    after: entry.after ?? null,
    ip: entry.ip ?? null,
    ...(entry.occurredAt ? { occurredAt: entry.occurredAt } : {}),
  }))
}
