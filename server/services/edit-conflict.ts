import { isDeepStrictEqual } from 'node:util'
import type { EntityManager } from 'typeorm'
import { AppError } from '../errors/app-error'

/**
 * Lost-update protection for records people edit in forms (projects, equipment, findings, template drafts): every edit
 * names the version it was made on, and one made on an older version is refused with who changed what and when, and
 * the record as it is now, so the person can keep theirs or send theirs again on the fresh version.
 */

/** The keys whose values differ between two plain snapshots (key order inside objects does not count). */
export function changedKeys(before: Record<string, unknown>, after: Record<string, unknown>, keys: readonly string[] = [...new Set([...Object.keys(before), ...Object.keys(after)])]): string[] {
  return keys.filter((k) => !isDeepStrictEqual(plain(before[k]), plain(after[k])))
}

/** A value as JSON holds it (no undefined members, dates as strings), so a value read back from jsonb compares equal. */
function plain(value: unknown): unknown {
  return value === undefined ? null : JSON.parse(JSON.stringify(value))
}

/** "a", "a and b", "a, b and c". */
export function listWords(words: readonly string[]): string {
  if (words.length <= 1) return words.join('')
  return `${words.slice(0, -1).join(', ')} and ${words[words.length - 1]}`
}

/** "14:02 UTC". */
export const utcTime = (at: Date) => `${at.toISOString().slice(11, 16)} UTC`

interface LastChange {
  actorId: string | null
  who: string
  at: Date
  keys: string[]
}

/** The newest audited edit of a record: who made it, when, and which keys it changed. */
export async function lastChange(manager: EntityManager, entityType: string, entityId: string, actions: readonly string[]): Promise<LastChange | null> {
  const rows: { actor_id: string | null; display_name: string | null; occurred_at: Date; before: Record<string, unknown> | null; after: Record<string, unknown> | null }[] = await manager.query(
    `SELECT e.actor_id, u.display_name, e.occurred_at, e.before, e.after
       FROM audit_event e LEFT JOIN app_user u ON u.id = e.actor_id
      WHERE e.entity_type = $1 AND e.entity_id = $2 AND e.action = ANY($3::text[])
      ORDER BY e.id DESC LIMIT 1`,
    [entityType, entityId, actions],
  )
  const row = rows[0]
  if (!row) return null
  return { actorId: row.actor_id, who: row.display_name ?? 'Someone', at: row.occurred_at, keys: changedKeys(row.before ?? {}, row.after ?? {}) }
}

export interface ConflictOptions {
  entityType: string
  entityId: string
  /** Audit actions that change the record's version. */
  actions: readonly string[]
  /** Words for each key a person edits (`designPoint` → "design point"); keys not listed are not named. */
  labels: Record<string, string>
  /** What to say when the change names no labelled key, e.g. "this draft". */
  thing: string
  /** Who is editing now: their own edit elsewhere is "You … (on another page or device)". */
  viewerId: string
  /** The record as it is now, for "keep theirs" and for sending again on its version. */
  current: unknown
}

/**
 * 409 `edit_conflict`: "Sam Example changed the description at 14:02 UTC; keep theirs or use yours", with a field
 * message on each key they changed and the current record in the body (`current`).
 */
export async function editConflict(manager: EntityManager, o: ConflictOptions): Promise<AppError> {
  const last = await lastChange(manager, o.entityType, o.entityId, o.actions)
  const mine = last?.actorId === o.viewerId
  const who = !last ? 'Someone' : mine ? 'You' : last.who
  const keys = (last?.keys ?? []).filter((k) => k in o.labels)
  const what = keys.length ? `the ${listWords([...new Set(keys.map((k) => o.labels[k]))])}` : o.thing
  const when = last ? ` at ${utcTime(last.at)}` : ''
  const where = mine ? ' on another page or device' : ''
  const fields = Object.fromEntries(keys.map((k) => [k, `Changed by ${who === 'You' ? 'you' : who}${when}`]))
  return new AppError(
    'edit_conflict',
    `${who} changed ${what}${when}${where}; keep theirs or use yours`,
    409,
    Object.keys(fields).length ? fields : undefined,
    { current: o.current },
  )
}
