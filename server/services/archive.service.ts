import type { DataSource } from 'typeorm'
import type { ArchiveQuery } from '@shared/schemas/archive'
import type { SessionUser } from '@shared/types/api'
import type { ArchiveFacets, ArchiveItem, ArchivePage } from '@shared/types/archive'
import { compareIssued, reportSupersession, type CheckIndex, type IssuedChecks, type ReportSupersession } from '@shared/record'
import { AppError } from '../errors/app-error'

export type { ArchiveItem, ArchivePage }

type Cursor = { at: string; id: string }
const encode = (c: Cursor) => Buffer.from(JSON.stringify(c)).toString('base64url')
function decode(s: string): Cursor {
  try {
    const c = JSON.parse(Buffer.from(s, 'base64url').toString('utf8')) as Cursor
    if (typeof c.at !== 'string' || typeof c.id !== 'string' || Number.isNaN(Date.parse(c.at))) throw new Error('shape')
    return c
  } catch {
    throw new AppError('invalid_input', 'cursor is not valid; start again from the first page', 400, { 'query.cursor': 'cursor is not valid' })
  }
}

/** Issued reports across the projects a person may see: filters, full-text search, keyset pages, counts. */
export class ArchiveService {
  constructor(private readonly db: DataSource) {}

  private async visibleProjects(user: SessionUser): Promise<string[]> {
    const rows: { id: string }[] =
      user.role === 'admin'
        ? await this.db.query(`SELECT p.id FROM project p JOIN app_user u ON u.organization_id = p.organization_id WHERE u.id = $1`, [user.id])
        : await this.db.query(`SELECT project_id AS id FROM project_member WHERE user_id = $1`, [user.id])
    return rows.map((r) => r.id)
  }

  /** Unknown or invisible ids are input errors naming their parameter, not empty results that hide a typo. */
  private async checkIds(user: SessionUser, visible: string[], q: ArchiveQuery) {
    const bad = (param: string, what: string) => new AppError('invalid_input', `${param} names no ${what} you can see`, 400, { [`query.${param}`]: `No such ${what}` })
    if (q.projectId && !visible.includes(q.projectId)) throw bad('projectId', 'project')
    if (q.equipmentId) {
      const [row] = await this.db.query(`SELECT 1 FROM equipment WHERE id = $1 AND project_id = ANY($2::uuid[])`, [q.equipmentId, visible])
      if (!row) throw bad('equipmentId', 'equipment')
    }
    if (q.templateId) {
      const [row] = await this.db.query(`SELECT 1 FROM checklist_template t JOIN app_user u ON u.organization_id = t.organization_id WHERE t.id = $1 AND u.id = $2`, [q.templateId, user.id])
      if (!row) throw bad('templateId', 'template')
    }
    if (q.technicianId) {
      const [row] = await this.db.query(`SELECT 1 FROM app_user t JOIN app_user u ON u.organization_id = t.organization_id WHERE t.id = $1 AND u.id = $2`, [q.technicianId, user.id])
      if (!row) throw bad('technicianId', 'person')
    }
  }

  async search(user: SessionUser, q: ArchiveQuery): Promise<ArchivePage> {
    const visible = await this.visibleProjects(user)
    await this.checkIds(user, visible, q)
    const where: string[] = [`r.status = 'ready'`, `r.project_id = ANY($1::uuid[])`]
    const params: unknown[] = [visible]
    const add = (sql: string, value: unknown) => {
      params.push(value)
      where.push(sql.replace('?', `$${params.length}`))
    }
    if (q.projectId) add('r.project_id = ?', q.projectId)
    if (q.equipmentId) add('r.equipment_id = ?', q.equipmentId)
    if (q.templateId) add('r.template_id = ?', q.templateId)
    if (q.technicianId) add('r.technician_id = ?', q.technicianId)
    // Days are the site's days (the time zone the report was issued in), as the page shows them. The wide bound (every
    // zone is within UTC−12…UTC+14) lets the index narrow the range; the exact test then looks at the local date.
    const localDay = `((r.accepted_at AT TIME ZONE r.time_zone)::date)`
    if (q.from) {
      add(`r.accepted_at >= (?::date - interval '14 hours')`, q.from)
      add(`${localDay} >= ?::date`, q.from)
    }
    if (q.to) {
      add(`r.accepted_at < (?::date + interval '1 day 12 hours')`, q.to)
      add(`${localDay} <= ?::date`, q.to)
    }
    if (q.hasFails !== undefined) where.push(q.hasFails ? 'r.fail_count > 0' : 'r.fail_count = 0')
    if (q.hasOpenFindings !== undefined) where.push(q.hasOpenFindings ? 'r.open_finding_count > 0' : 'r.open_finding_count = 0')
    if (q.q) {
      params.push(q.q)
      where.push(`r.search @@ (websearch_to_tsquery('simple', $${params.length}) || websearch_to_tsquery('english', $${params.length}))`)
    }
    const filtered = where.join(' AND ')
    const [{ total }] = await this.db.query(`SELECT count(*)::int AS total FROM report r WHERE ${filtered}`, params)

    const newest = q.sort !== 'oldest'
    const pageWhere = [...where]
    const pageParams = [...params]
    if (q.cursor) {
      const c = decode(q.cursor)
      pageParams.push(c.at, c.id)
      pageWhere.push(`(r.accepted_at, r.id) ${newest ? '<' : '>'} ($${pageParams.length - 1}::timestamptz, $${pageParams.length}::uuid)`)
    }
    pageParams.push(q.limit + 1)
    const rows = await this.select(pageWhere.join(' AND '), pageParams, `r.accepted_at ${newest ? 'DESC' : 'ASC'}, r.id ${newest ? 'DESC' : 'ASC'}`, `LIMIT $${pageParams.length}`)
    const more = rows.length > q.limit
    const page = rows.slice(0, q.limit)
    const last = page[page.length - 1]
    return {
      total,
      nextCursor: more && last ? encode({ at: new Date(last.accepted_at as string).toISOString(), id: last.id as string }) : null,
      items: await this.withSupersession(page),
    }
  }

  /** The visible issued reports of one project, or the named ones, for a handover package; a name one may not see is a 400 naming it. */
  async itemsFor(user: SessionUser, scope: { projectId?: string; reportNumbers?: string[] }): Promise<(ArchiveItem & { storageKey: string })[]> {
    const visible = await this.visibleProjects(user)
    if (scope.projectId) {
      if (!visible.includes(scope.projectId)) throw new AppError('invalid_input', 'projectId names no project you can see', 400, { projectId: 'No such project' })
      const rows = await this.select(`r.status = 'ready' AND r.project_id = $1`, [scope.projectId], 'r.equipment_tag, r.accepted_at, r.id')
      const items = await this.withSupersession(rows)
      return items.map((item, i) => ({ ...item, storageKey: rows[i].storage_key as string }))
    }
    const numbers = [...new Set(scope.reportNumbers ?? [])]
    const rows = await this.select(`r.status = 'ready' AND r.project_id = ANY($1::uuid[]) AND r.report_number = ANY($2::text[])`, [visible, numbers], 'r.project_code, r.equipment_tag, r.accepted_at, r.id')
    const found = new Set(rows.map((r) => r.report_number as string))
    const missing: Record<string, string> = {}
    ;(scope.reportNumbers ?? []).forEach((n, i) => {
      if (!found.has(n)) missing[`reportNumbers[${i}]`] = `${n} names no issued report you can see`
    })
    if (Object.keys(missing).length) throw new AppError('invalid_input', Object.values(missing).join('; '), 400, missing)
    const items = await this.withSupersession(rows)
    return items.map((item, i) => ({ ...item, storageKey: rows[i].storage_key as string }))
  }

  /** What the filter menus offer: the projects, equipment, checklists and technicians that have visible issued reports. */
  async facets(user: SessionUser): Promise<ArchiveFacets> {
    const visible = await this.visibleProjects(user)
    const [projects, equipment, templates, technicians] = await Promise.all([
      this.db.query(
        `SELECT p.id, p.code, p.name, p.closed_at IS NOT NULL AS closed, count(r.id)::int AS report_count
           FROM project p LEFT JOIN report r ON r.project_id = p.id AND r.status = 'ready'
          WHERE p.id = ANY($1::uuid[]) GROUP BY p.id ORDER BY p.code`,
        [visible],
      ),
      this.db.query(
        `SELECT e.id, e.project_id, e.tag, e.kind, count(*)::int AS report_count
           FROM report r JOIN equipment e ON e.id = r.equipment_id
          WHERE r.status = 'ready' AND r.project_id = ANY($1::uuid[]) GROUP BY e.id ORDER BY e.tag`,
        [visible],
      ),
      this.db.query(
        `SELECT t.id, t.name, count(*)::int AS report_count
           FROM report r JOIN checklist_template t ON t.id = r.template_id
          WHERE r.status = 'ready' AND r.project_id = ANY($1::uuid[]) GROUP BY t.id ORDER BY t.name`,
        [visible],
      ),
      this.db.query(
        `SELECT u.id, u.display_name AS name, u.active, count(*)::int AS report_count
           FROM report r JOIN app_user u ON u.id = r.technician_id
          WHERE r.status = 'ready' AND r.project_id = ANY($1::uuid[]) GROUP BY u.id ORDER BY u.display_name`,
        [visible],
      ),
    ])
    return {
      projects: projects.map((p: Record<string, unknown>) => ({ id: p.id, code: p.code, name: p.name, closed: p.closed, reportCount: p.report_count })),
      equipment: equipment.map((e: Record<string, unknown>) => ({ id: e.id, projectId: e.project_id, tag: e.tag, kind: e.kind, reportCount: e.report_count })),
      templates: templates.map((t: Record<string, unknown>) => ({ id: t.id, name: t.name, reportCount: t.report_count })),
      technicians: technicians.map((t: Record<string, unknown>) => ({ id: t.id, name: t.name, active: t.active, reportCount: t.report_count })),
    }
  }

  /**
   * Each row with its supersession by check: one query reads the check indexes kept on the issued reports of the page's
   * lineages (equipment and checklist), never a snapshot or a reading; the state is computed from those.
   */
  private async withSupersession(rows: Record<string, unknown>[]): Promise<ArchiveItem[]> {
    if (!rows.length) return []
    const key = (equipmentId: unknown, templateId: unknown) => `${equipmentId}\u0000${templateId}`
    const pairs = [...new Map(rows.map((r) => [key(r.equipment_id, r.template_id), [r.equipment_id as string, r.template_id as string] as const])).values()]
    const issued: { report_number: string; equipment_id: string; template_id: string; accepted_at: Date; check_index: CheckIndex | null }[] = await this.db.query(
      `SELECT n.report_number, n.equipment_id, n.template_id, n.accepted_at, n.check_index
         FROM report n JOIN unnest($1::uuid[], $2::uuid[]) AS l(equipment_id, template_id) ON n.equipment_id = l.equipment_id AND n.template_id = l.template_id
        WHERE n.status = 'ready'`,
      [pairs.map((p) => p[0]), pairs.map((p) => p[1])],
    )
    const lineages = new Map<string, IssuedChecks[]>()
    for (const n of issued) {
      const k = key(n.equipment_id, n.template_id)
      let list = lineages.get(k)
      if (!list) lineages.set(k, (list = []))
      list.push({ reportNumber: n.report_number, acceptedAt: new Date(n.accepted_at).toISOString(), index: n.check_index })
    }
    for (const list of lineages.values()) list.sort(compareIssued)
    return rows.map((r) => {
      const lineage = lineages.get(key(r.equipment_id, r.template_id)) ?? []
      const own = lineage.find((x) => x.reportNumber === r.report_number)
      const supersession = own ? reportSupersession(own, lineage) : reportSupersession({ reportNumber: r.report_number as string, acceptedAt: new Date(r.accepted_at as string).toISOString(), index: null }, lineage)
      return toItem(r, supersession)
    })
  }

  private select(where: string, params: unknown[], orderBy: string, limit = ''): Promise<Record<string, unknown>[]> {
    return this.db.query(
      // Identity as issued (copied from the signed snapshot at acceptance); only whether the project is closed is live.
      `SELECT r.report_number, r.run_id, r.project_id, r.project_code, r.project_name, p.closed_at IS NOT NULL AS project_closed,
              r.time_zone,
              r.equipment_id, r.equipment_tag AS tag, r.equipment_kind AS kind, r.serial_number, r.template_id, r.template_name, r.template_version,
              r.technician_id, u.display_name AS technician_name, r.accepted_at, r.fail_count, r.marginal_count, r.open_finding_count,
              r.sha256, r.size_bytes, r.storage_key, r.id
         FROM report r
         JOIN project p ON p.id = r.project_id
         LEFT JOIN app_user u ON u.id = r.technician_id
        WHERE ${where}
        ORDER BY ${orderBy}
        ${limit}`,
      params,
    )
  }
}

function toItem(r: Record<string, unknown>, supersession: ReportSupersession): ArchiveItem {
  return {
    reportNumber: r.report_number as string,
    runId: r.run_id as string,
    projectId: r.project_id as string,
    projectCode: r.project_code as string,
    projectName: r.project_name as string,
    projectClosed: r.project_closed as boolean,
    projectTimeZone: r.time_zone as string,
    equipmentId: r.equipment_id as string,
    equipmentTag: r.tag as string,
    equipmentKind: r.kind as string,
    serialNumber: r.serial_number as string,
    templateId: r.template_id as string,
    templateName: r.template_name as string,
    templateVersion: r.template_version as number,
    technicianId: (r.technician_id as string | null) ?? null,
    technicianName: (r.technician_name as string | null) ?? null,
    acceptedAt: new Date(r.accepted_at as string).toISOString(),
    failCount: r.fail_count as number,
    marginalCount: r.marginal_count as number,
    openFindingCount: r.open_finding_count as number,
    sha256: r.sha256 as string,
    sizeBytes: Number(r.size_bytes),
    downloadUrl: `/api/runs/${r.run_id}/report.pdf`,
    // Superseded as a whole only when every check it performed has a newer result: the newest report that re-tested it.
    supersededBy: supersession.state === 'superseded' ? (supersession.by.at(-1)?.reportNumber ?? null) : null,
    supersession,
  }
}
