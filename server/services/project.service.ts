import { DataSource, In, type EntityManager } from 'typeorm'
import type { ProjectMemberSummary, ProjectSummary, SessionUser } from '@shared/types/api'
import type { ProjectCreateInput, ProjectUpdateInput } from '@shared/schemas/project'
import { AppError } from '../errors/app-error'
import { Equipment, Project, ProjectMember, User } from '../entities'
import { recordAudit } from './audit.service'
import type { Actor } from './user.service'

type ProjectFields = Pick<Project, 'code' | 'name' | 'siteName' | 'siteAddress' | 'timeZone' | 'unitSystem' | 'distributionList' | 'reportPaper'>

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
  }
}

function toSummary(p: Project, memberCount: number, equipmentCount: number): ProjectSummary {
  return { id: p.id, ...snapshot(p), closedAt: p.closedAt ? p.closedAt.toISOString() : null, memberCount, equipmentCount }
}

/** Projects and who may see them: admins see their firm's projects, everyone else only their memberships. */
export class ProjectService {
  constructor(private readonly db: DataSource) {}

  async isMember(userId: string, projectId: string): Promise<boolean> {
    return this.db.getRepository(ProjectMember).existsBy({ userId, projectId })
  }

  /** Whether `user` may read project `projectId` at all (admins of the owning firm, or members). */
  async canAccess(user: SessionUser, projectId: string): Promise<boolean> {
    if (user.role === 'admin') {
      const rows: { ok: boolean }[] = await this.db.query(
        `SELECT EXISTS (SELECT 1 FROM project p JOIN app_user u ON u.organization_id = p.organization_id
                         WHERE p.id = $1 AND u.id = $2) AS ok`,
        [projectId, user.id],
      )
      return rows[0].ok
    }
    return this.isMember(user.id, projectId)
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

  async update(projectId: string, input: ProjectUpdateInput, actor: Actor): Promise<ProjectSummary> {
    await this.db.transaction(async (tx) => {
      const project = await tx.getRepository(Project).findOne({ where: { id: projectId }, lock: { mode: 'pessimistic_write' } })
      if (!project) throw AppError.notFound('Project')
      if (input.code !== undefined) await this.assertCodeFree(tx, input.code, projectId)
      const before = snapshot(project)
      for (const [key, value] of Object.entries(input)) {
        if (value !== undefined) (project as unknown as Record<string, unknown>)[key] = value
      }
      await tx.getRepository(Project).save(project)
      await recordAudit(tx, { actorId: actor.id, action: 'project.update', entityType: 'project', entityId: projectId, projectId, before, after: snapshot(project), ip: actor.ip })
    })
    return this.get(projectId)
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

  /** Removes a project that holds nothing yet; one with equipment (and so, later, runs and reports) is refused. */
  async remove(projectId: string, actor: Actor): Promise<void> {
    await this.db.transaction(async (tx) => {
      const project = await tx.getRepository(Project).findOne({ where: { id: projectId }, lock: { mode: 'pessimistic_write' } })
      if (!project) throw AppError.notFound('Project')
      const equipment = await tx.getRepository(Equipment).countBy({ projectId })
      if (equipment > 0) {
        throw new AppError('project_in_use', `Project ${project.code} has ${equipment} equipment item${equipment === 1 ? '' : 's'}; remove them first. Nothing was deleted.`, 409)
      }
      await tx.getRepository(ProjectMember).delete({ projectId })
      await tx.getRepository(Project).delete({ id: projectId })
      await recordAudit(tx, { actorId: actor.id, action: 'project.delete', entityType: 'project', entityId: projectId, before: snapshot(project), ip: actor.ip })
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
