import { DataSource } from 'typeorm'
import type { ProjectMemberSummary, ProjectSummary, SessionUser } from '@shared/types/api'
import { AppError } from '../errors/app-error'
import { Project, ProjectMember, User } from '../entities'

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
    const qb = this.db
      .getRepository(Project)
      .createQueryBuilder('p')
      .loadRelationCountAndMap('p.memberCount', 'p.members')
      .orderBy('p.name', 'ASC')
    if (user.role === 'admin') {
      qb.innerJoin(User, 'me', 'me.organizationId = p.organizationId AND me.id = :uid', { uid: user.id })
    } else {
      qb.innerJoin(ProjectMember, 'pm', 'pm.projectId = p.id AND pm.userId = :uid', { uid: user.id })
    }
    const rows = (await qb.getMany()) as (Project & { memberCount: number })[]
    return rows.map((p) => toSummary(p, p.memberCount))
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
