import { DataSource, In } from 'typeorm'
import type { ProjectMemberSummary, ProjectSummary, SessionUser } from '@shared/types/api'
import { AppError } from '../errors/app-error'
import { Project, ProjectMember } from '../entities'

function toSummary(p: Project, memberCount: number): ProjectSummary {
  return {
    id: p.id,
    code: p.code,
    name: p.name,
    siteName: p.siteName,
    siteAddress: p.siteAddress,
    timeZone: p.timeZone,
    unitSystem: p.unitSystem,
    memberCount,
  }
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

  async listFor(user: SessionUser): Promise<ProjectSummary[]> {
    const visible =
      user.role === 'admin'
        ? `p.organization_id = (SELECT organization_id FROM app_user WHERE id = $1)`
        : `EXISTS (SELECT 1 FROM project_member pm WHERE pm.project_id = p.id AND pm.user_id = $1)`
    const rows: { id: string; member_count: number }[] = await this.db.query(
      `SELECT p.id, (SELECT count(*)::int FROM project_member c WHERE c.project_id = p.id) AS member_count
         FROM project p WHERE ${visible} ORDER BY p.name`,
      [user.id],
    )
    if (!rows.length) return []
    const projects = await this.db.getRepository(Project).findBy({ id: In(rows.map((r) => r.id)) })
    const byId = new Map(projects.map((p) => [p.id, p]))
    return rows.map((r) => toSummary(byId.get(r.id)!, r.member_count))
  }

  async get(projectId: string): Promise<ProjectSummary> {
    const project = await this.db.getRepository(Project).findOneBy({ id: projectId })
    if (!project) throw AppError.notFound('Project')
    const count = await this.db.getRepository(ProjectMember).countBy({ projectId })
    return toSummary(project, count)
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
}
