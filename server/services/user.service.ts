import { DataSource, In } from 'typeorm'
import type { SessionUser, UserSummary } from '@shared/types/api'
import type { UserCreateInput, UserUpdateInput } from '@shared/schemas/user'
import { AppError } from '../errors/app-error'
import { Organization, ProjectMember, User } from '../entities'
import { burnPasswordCheck, hashPassword, verifyPassword } from '../auth/passwords'
import { recordAudit } from './audit.service'

export const INVALID_CREDENTIALS = 'Email or password is incorrect, or the account is not active.'

/** The columns of the signed-in view of a person, from `app_user u` and `organization o`: one place for both readers. */
export const SESSION_USER_COLUMNS = 'u.id, u.email, u.display_name, u.role, o.name AS organization_name'
export interface SessionUserRow { id: string; email: string; display_name: string; role: SessionUser['role']; organization_name: string }
export const toSessionUser = (row: SessionUserRow): SessionUser => ({
  id: row.id,
  email: row.email,
  displayName: row.display_name,
  role: row.role,
  organizationName: row.organization_name,
})

export interface Actor {
  id: string
  ip?: string | null
}

function toSummary(user: User, projectIds: string[]): UserSummary {
  return {
    id: user.id,
    email: user.email,
    displayName: user.displayName,
    role: user.role,
    active: user.active,
    createdAt: user.createdAt.toISOString(),
    lastSignInAt: user.lastSignInAt ? user.lastSignInAt.toISOString() : null,
    projectIds,
  }
}

/** People in the firm and what they do; passwords only ever leave as scrypt hashes into the database. */
export class UserService {
  constructor(private readonly db: DataSource) {}

  /** The signed-in view of a user, or null when the account is gone or deactivated. */
  async sessionUser(id: string): Promise<SessionUser | null> {
    // Once per request when the session store has not read the person with the session (server/auth/session-user.ts).
    const [row] = (await this.db.query(
      `SELECT ${SESSION_USER_COLUMNS} FROM app_user u JOIN organization o ON o.id = u.organization_id WHERE u.id = $1 AND u.active`,
      [id],
    )) as SessionUserRow[]
    return row ? toSessionUser(row) : null
  }

  /** Checks credentials; one answer for unknown, wrong and deactivated so nobody can probe accounts. */
  async authenticate(email: string, password: string, ip: string | null): Promise<SessionUser> {
    const user = await this.db
      .getRepository(User)
      .createQueryBuilder('u')
      .addSelect('u.passwordHash')
      .where('u.email = :email', { email: email.trim().toLowerCase() })
      .getOne()
    if (!user) {
      await burnPasswordCheck(password)
      throw new AppError('invalid_credentials', INVALID_CREDENTIALS, 401)
    }
    const ok = await verifyPassword(password, user.passwordHash)
    if (!ok || !user.active) {
      await recordAudit(this.db.manager, { actorId: null, action: 'session.sign_in_failed', entityType: 'user', entityId: user.id, ip })
      throw new AppError('invalid_credentials', INVALID_CREDENTIALS, 401)
    }
    await this.db.getRepository(User).update(user.id, { lastSignInAt: new Date() })
    await recordAudit(this.db.manager, { actorId: user.id, action: 'session.sign_in', entityType: 'user', entityId: user.id, ip })
    return (await this.sessionUser(user.id))!
  }

  async list(): Promise<UserSummary[]> {
    const users = await this.db.getRepository(User).find({ order: { active: 'DESC', displayName: 'ASC' } })
    const memberships = users.length
      ? await this.db.getRepository(ProjectMember).find({ where: { userId: In(users.map((u) => u.id)) } })
      : []
    return users.map((u) => toSummary(u, memberships.filter((m) => m.userId === u.id).map((m) => m.projectId)))
  }

  async get(id: string): Promise<UserSummary> {
    const user = await this.db.getRepository(User).findOneBy({ id })
    if (!user) throw AppError.notFound('Person')
    const memberships = await this.db.getRepository(ProjectMember).findBy({ userId: id })
    return toSummary(user, memberships.map((m) => m.projectId))
  }

  async create(input: UserCreateInput, actor: Actor): Promise<UserSummary> {
    return this.db.transaction(async (tx) => {
      const exists = await tx.getRepository(User).existsBy({ email: input.email })
      if (exists) throw new AppError('email_taken', `A person with email ${input.email} already exists`, 409, { email: 'This email is already in use' })
      const me = await tx.getRepository(User).findOneByOrFail({ id: actor.id })
      const org = await tx.getRepository(Organization).findOneByOrFail({ id: me.organizationId })
      const saved = await tx.getRepository(User).save(
        tx.getRepository(User).create({
          organizationId: org.id,
          email: input.email,
          displayName: input.displayName,
          role: input.role,
          passwordHash: await hashPassword(input.password),
          active: true,
          passwordChangedAt: new Date(),
        }),
      )
      await recordAudit(tx, {
        actorId: actor.id,
        action: 'user.create',
        entityType: 'user',
        entityId: saved.id,
        after: { email: saved.email, displayName: saved.displayName, role: saved.role, active: true },
        ip: actor.ip,
      })
      return toSummary(saved, [])
    })
  }

  async update(id: string, input: UserUpdateInput, actor: Actor): Promise<UserSummary> {
    await this.db.transaction(async (tx) => {
      const repo = tx.getRepository(User)
      const user = await repo.findOne({ where: { id }, lock: { mode: 'pessimistic_write' } })
      if (!user) throw AppError.notFound('Person')
      const before = { displayName: user.displayName, role: user.role, active: user.active }
      const losesAdmin = user.role === 'admin' && ((input.role && input.role !== 'admin') || input.active === false)
      if (losesAdmin && id === actor.id) {
        throw new AppError('self_lockout', 'You cannot remove your own administrator access or deactivate yourself', 409,
          input.active === false ? { active: 'You cannot deactivate yourself' } : { role: 'You cannot change your own role' })
      }
      if (losesAdmin) {
        const admins = await repo.countBy({ role: 'admin', active: true })
        if (admins <= 1) throw new AppError('last_admin', 'At least one active administrator must remain', 409)
      }
      if (input.displayName !== undefined) user.displayName = input.displayName
      if (input.role !== undefined) user.role = input.role
      if (input.active !== undefined) user.active = input.active
      await repo.save(user)
      const after = { displayName: user.displayName, role: user.role, active: user.active }
      await recordAudit(tx, { actorId: actor.id, action: 'user.update', entityType: 'user', entityId: id, before, after, ip: actor.ip })
      if (input.active === false) {
        // End every session of the deactivated person at once, not at their next request.
        await tx.query(`DELETE FROM session WHERE sess -> 'passport' ->> 'user' = $1`, [id])
      }
    })
    return this.get(id)
  }

  /** Changes the signed-in user's own password after checking the current one. */
  async changePassword(id: string, currentPassword: string, newPassword: string, actor: Actor, keepSessionId?: string): Promise<void> {
    const user = await this.db.getRepository(User).createQueryBuilder('u').addSelect('u.passwordHash').where('u.id = :id', { id }).getOne()
    if (!user || !user.active) throw AppError.unauthenticated()
    if (!(await verifyPassword(currentPassword, user.passwordHash))) {
      throw new AppError('wrong_password', 'Current password is incorrect', 400, { currentPassword: 'Current password is incorrect' })
    }
    const passwordHash = await hashPassword(newPassword)
    await this.db.transaction(async (tx) => {
      await tx.getRepository(User).update(id, { passwordHash, passwordChangedAt: new Date() })
      await recordAudit(tx, { actorId: actor.id, action: 'user.password_change', entityType: 'user', entityId: id, ip: actor.ip })
      // Other signed-in devices must sign in again with the new password.
      await tx.query(`DELETE FROM session WHERE sess -> 'passport' ->> 'user' = $1 AND sid <> $2`, [id, keepSessionId ?? ''])
    })
  }
}
