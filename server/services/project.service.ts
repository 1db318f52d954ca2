import { DataSource, In, type EntityManager } from 'typeorm'
import type { ProjectMemberSummary, ProjectSummary, SessionUser } from '@shared/types/api'
import type { DesignChangeOutcome } from '@shared/types/design-change'
import type { ProjectCreateInput, ProjectUpdateInput } from '@shared/schemas/project'
import { AppError } from '../errors/app-error'
import { CloseoutDocument, Equipment, Project, ProjectMember, Run, User } from '../entities'
import { recordAudit } from './audit.service'
import { applyDesignChange, identityKeys, lockOpenRuns, PROJECT_IDENTITY, requireConfirmation } from './design-change'
import { changedKeys, editConflict } from './edit-conflict'
import type { Actor } from './user.service'

/** Words for each field of the project form, for "Sam changed the time zone at 14:02 UTC". */
const PROJECT_LABELS: Record<string, string> = {
  code: 'project code',
  name: 'name',
  siteName: 'site name',
  siteAddress: 'site address',
  timeZone: 'time zone',
  unitSystem: 'unit system',
  distributionList: 'distribution list',
  reportPaper: 'report paper',
  siteElevationM: 'site elevation',
  barometricKpa: 'site barometric pressure',
}

type ProjectFields = Pick<Project, 'code' | 'name' | 'siteName' | 'siteAddress' | 'timeZone' | 'unitSystem' | 'distributionList' | 'reportPaper' | 'siteElevationM' | 'barometricKpa'>

function snapshot(p: Project): ProjectFields {
  return {
    code: p.code,
    name: p.name,
    siteName: p.siteName,
    siteAddress: p.siteAddress,
    timeZone: p.timeZone,
    unitSystem: p.unitSystem,
    distributionList: p.distributionList,
    reportPaper: p.reportPaper,
    siteElevationM: p.siteElevationM ?? null,
    barometricKpa: p.barometricKpa ?? null,
  }
}

function toSummary(p: Project, memberCount: number, equipmentCount: number): ProjectSummary {
  return { id: p.id, ...snapshot(p), closedAt: p.closedAt ? p.closedAt.toISOString() : null, memberCount, equipmentCount, version: p.version }
}

const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`

/** Projects and who may see them: admins see their firm's projects, everyone else only their memberships. */
export class ProjectService {
  constructor(private readonly db: DataSource) {}

  async isMember(userId: string, projectId: string, manager: EntityManager = this.db.manager): Promise<boolean> {
    return manager.getRepository(ProjectMember).existsBy({ userId, projectId })
  }

  /**
   * Whether `user` may read project `projectId` at all (admins of the owning firm, or members). Inside a transaction
   * pass its manager: the check then runs on the transaction's connection instead of waiting for a second one.
   */
  async canAccess(user: SessionUser, projectId: string, manager: EntityManager = this.db.manager): Promise<boolean> {
    if (user.role === 'admin') {
      const rows: { ok: boolean }[] = await manager.query(
        `SELECT EXISTS (SELECT 1 FROM project p JOIN app_user u ON u.organization_id = p.organization_id
                         WHERE p.id = $1 AND u.id = $2) AS ok`,
        [projectId, user.id],
      )
      return rows[0].ok
    }
    return this.isMember(user.id, projectId, manager)
  }

  private async summaries(ids: string[]): Promise<ProjectSummary[]> {
    if (!ids.length) return []
    const rows: { id: string; members: number; equipment: number }[] = await this.db.query(
      `SELECT p.id,
              (SELECT count(*)::int FROM project_member m WHERE m.project_id = p.id) AS members,
              (SELECT count(*)::int FROM equipment e WHERE e.project_id = p.id) AS equipment
         FROM project p WHERE p.id = ANY($1::uuid[])`,
      [ids],
    )
    const projects = await this.db.getRepository(Project).findBy({ id: In(ids) })
    const byId = new Map(rows.map((r) => [r.id, r]))
    return projects
      .sort((a, b) => a.name.localeCompare(b.name))
      .map((p) => toSummary(p, byId.get(p.id)?.members ?? 0, byId.get(p.id)?.equipment ?? 0))
  }

  async listFor(user: SessionUser): Promise<ProjectSummary[]> {
    const visible =
      user.role === 'admin'
        ? `p.organization_id = (SELECT organization_id FROM app_user WHERE id = $1)`
        : `EXISTS (SELECT 1 FROM project_member pm WHERE pm.project_id = p.id AND pm.user_id = $1)`
    const rows: { id: string }[] = await this.db.query(`SELECT p.id FROM project p WHERE ${visible}`, [user.id])
    return this.summaries(rows.map((r) => r.id))
  }

  async get(projectId: string): Promise<ProjectSummary> {
    const [summary] = await this.summaries([projectId])
    if (!summary) throw AppError.notFound('Project')
    return summary
  }

  private async assertCodeFree(tx: EntityManager, code: string, exceptId?: string) {
    const existing = await tx.getRepository(Project).findOneBy({ code })
    if (existing && existing.id !== exceptId) {
      throw new AppError('code_taken', `Project code ${code} is already used`, 409, { code: 'This project code is already used' })
    }
  }

  async create(input: ProjectCreateInput, actor: Actor): Promise<ProjectSummary> {
    const id = await this.db.transaction(async (tx) => {
      await this.assertCodeFree(tx, input.code)
      const me = await tx.getRepository(User).findOneByOrFail({ id: actor.id })
      const saved = await tx.getRepository(Project).save({ ...input, organizationId: me.organizationId })
      await recordAudit(tx, { actorId: actor.id, action: 'project.create', entityType: 'project', entityId: saved.id, projectId: saved.id, after: snapshot(saved), ip: actor.ip })
      return saved.id
    })
    return this.get(id)
  }

  /**
   * Edits a project on the version the edit was made on (409 `edit_conflict` when someone changed it since; an edit
   * that changes nothing is accepted as it is). A change of its identity, site, units or time zone reaches its runs:
   * runs in progress are re-judged, submitted ones need `confirmVoid` (409 `affects_signed_runs` names them) and then
   * lose the performer's signature and go back to the technician. Accepted runs are not touched.
   */
  async update(projectId: string, input: ProjectUpdateInput, actor: Actor, links: { publicUrl?: string | null } = {}): Promise<{ project: ProjectSummary; runs: DesignChangeOutcome }> {
    const runs = await this.db.transaction(async (tx) => {
      const project = await tx.getRepository(Project).findOne({ where: { id: projectId }, lock: { mode: 'pessimistic_write' } })
      if (!project) throw AppError.notFound('Project')
      const { version, confirmVoid, ...fields } = input
      const before = snapshot(project)
      const after: ProjectFields = { ...before }
      for (const [key, value] of Object.entries(fields)) {
        if (value !== undefined) (after as unknown as Record<string, unknown>)[key] = value
      }
      const changed = changedKeys(before, after)
      const none: DesignChangeOutcome = { rejudged: [], voided: [] }
      if (!changed.length) return none
      if (project.version !== version) {
        throw await editConflict(tx, { entityType: 'project', entityId: projectId, actions: ['project.update'], labels: PROJECT_LABELS, thing: 'this project', viewerId: actor.id, current: await this.get(projectId) })
      }
      if (changed.includes('code')) await this.assertCodeFree(tx, after.code, projectId)
      const keys = identityKeys(before, after, PROJECT_IDENTITY)
      const change = {
        cause: 'project.update' as const,
        scope: { projectId },
        subject: `project ${project.code}`,
        keys,
        labels: PROJECT_IDENTITY,
        before: Object.fromEntries(keys.map((k) => [k, (before as unknown as Record<string, unknown>)[k]])),
        after: Object.fromEntries(keys.map((k) => [k, (after as unknown as Record<string, unknown>)[k]])),
        actor,
        publicUrl: links.publicUrl ?? null,
      }
      const open = keys.length ? await lockOpenRuns(tx, { projectId }) : []
      requireConfirmation(open, confirmVoid, change)
      Object.assign(project, after, { version: project.version + 1 })
      await tx.getRepository(Project).save(project)
      await recordAudit(tx, { actorId: actor.id, action: 'project.update', entityType: 'project', entityId: projectId, projectId, before, after: snapshot(project), ip: actor.ip })
      return open.length ? applyDesignChange(tx, open, change) : none
    })
    return { project: await this.get(projectId), runs }
  }

  /** Closes a project at handover: no new runs start on it; its reports, documents and members stay as they are. */
  async close(projectId: string, actor: Actor): Promise<ProjectSummary> {
    return this.setClosed(projectId, true, actor)
  }

  /** Opens a closed project again (e.g. for a warranty re-test). */
  async reopen(projectId: string, actor: Actor): Promise<ProjectSummary> {
    return this.setClosed(projectId, false, actor)
  }

  private async setClosed(projectId: string, closed: boolean, actor: Actor): Promise<ProjectSummary> {
    await this.db.transaction(async (tx) => {
      const project = await tx.getRepository(Project).findOne({ where: { id: projectId }, lock: { mode: 'pessimistic_write' } })
      if (!project) throw AppError.notFound('Project')
      if (Boolean(project.closedAt) === closed) {
        throw new AppError(closed ? 'project_closed' : 'project_open', `Project ${project.code} is already ${closed ? 'closed' : 'open'}`, 409)
      }
      const before = { closedAt: project.closedAt }
      await tx.getRepository(Project).update(projectId, { closedAt: closed ? new Date() : null, closedById: closed ? actor.id : null })
      await recordAudit(tx, {
        actorId: actor.id,
        action: closed ? 'project.close' : 'project.reopen',
        entityType: 'project',
        entityId: projectId,
        projectId,
        before,
        after: { closed },
        ip: actor.ip,
      })
    })
    return this.get(projectId)
  }

  /**
   * Removes a project that holds nothing yet. One with equipment, runs or closeout documents (records that are kept)
   * is refused with what it holds. Its audit events stay: they keep the project's id as plain data.
   */
  async remove(projectId: string, actor: Actor): Promise<void> {
    await this.db.transaction(async (tx) => {
      const project = await tx.getRepository(Project).findOne({ where: { id: projectId }, lock: { mode: 'pessimistic_write' } })
      if (!project) throw AppError.notFound('Project')
      const [equipment, runs, documents] = await Promise.all([
        tx.getRepository(Equipment).countBy({ projectId }),
        tx.getRepository(Run).countBy({ projectId }),
        tx.getRepository(CloseoutDocument).countBy({ projectId }),
      ])
      if (runs > 0) {
        throw new AppError('project_in_use', `Project ${project.code} has ${plural(equipment, 'equipment item')} and ${plural(runs, 'start-up run')}, which are kept as records; close the project instead. Nothing was deleted.`, 409)
      }
      if (equipment > 0) {
        throw new AppError('project_in_use', `Project ${project.code} has ${plural(equipment, 'equipment item')}; remove them first. Nothing was deleted.`, 409)
      }
      if (documents > 0) {
        throw new AppError('project_in_use', `Project ${project.code} has ${plural(documents, 'closeout document')}, which are kept for retention, so it cannot be deleted; close it instead. Nothing was deleted.`, 409)
      }
      await tx.getRepository(ProjectMember).delete({ projectId })
      await tx.getRepository(Project).delete({ id: projectId })
      await recordAudit(tx, { actorId: actor.id, action: 'project.delete', entityType: 'project', entityId: projectId, projectId, before: snapshot(project), ip: actor.ip })
    })
  }

  async members(projectId: string): Promise<ProjectMemberSummary[]> {
    const rows = await this.db.getRepository(ProjectMember).find({
      where: { projectId },
      relations: { user: true },
      order: { user: { displayName: 'ASC' } },
    })
    return rows.map((m) => ({
      userId: m.userId,
      displayName: m.user.displayName,
      email: m.user.email,
      role: m.user.role,
      active: m.user.active,
    }))
  }

  async addMember(projectId: string, userId: string, actor: Actor): Promise<ProjectMemberSummary[]> {
    await this.db.transaction(async (tx) => {
      const project = await tx.getRepository(Project).findOneBy({ id: projectId })
      if (!project) throw AppError.notFound('Project')
      const user = await tx.getRepository(User).findOneBy({ id: userId, organizationId: project.organizationId })
      if (!user) throw new AppError('not_found', 'Person was not found', 404, { userId: 'No such person in this firm' })
      if (!user.active) throw new AppError('inactive_user', `${user.displayName} is deactivated; reactivate them first`, 409, { userId: 'This person is deactivated' })
      if (await tx.getRepository(ProjectMember).existsBy({ projectId, userId })) return
      await tx.getRepository(ProjectMember).insert({ projectId, userId })
      await recordAudit(tx, { actorId: actor.id, action: 'project.member_add', entityType: 'project_member', entityId: userId, projectId, after: { userId, role: user.role }, ip: actor.ip })
    })
    return this.members(projectId)
  }

  async removeMember(projectId: string, userId: string, actor: Actor): Promise<ProjectMemberSummary[]> {
    await this.db.transaction(async (tx) => {
      const result = await tx.getRepository(ProjectMember).delete({ projectId, userId })
      if (!result.affected) throw new AppError('not_found', 'That person is not on this project', 404)
      await recordAudit(tx, { actorId: actor.id, action: 'project.member_remove', entityType: 'project_member', entityId: userId, projectId, before: { userId }, ip: actor.ip })
    })
    return this.members(projectId)
  }
}
