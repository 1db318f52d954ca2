import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest'
import request from 'supertest'
import { AuditEvent } from '../../server/entities'
import { createTestContext, makeOrganization, makeUser, resetDatabase, signedInAgent, type TestContext } from '../helpers/context'

let ctx: TestContext
beforeAll(async () => {
  ctx = await createTestContext()
})
afterAll(() => ctx.close())
beforeEach(() => resetDatabase(ctx.db))

async function firm() {
  const org = await makeOrganization(ctx.db)
  const admin = await makeUser(ctx.db, org, 'admin')
  return { org, admin, agent: await signedInAgent(ctx.app, admin) }
}

describe('/api/users (People, administrators only)', () => {
  it.each(['technician', 'owner_rep', 'contractor'] as const)('when a %s asks for the people list, then 403', async (role) => {
    const { org } = await firm()
    const someone = await makeUser(ctx.db, org, role)
    const agent = await signedInAgent(ctx.app, someone)

    const list = await agent.get('/api/users')
    const create = await agent.post('/api/users').send({ email: 'x@firm.test', displayName: 'X Y', role: 'admin', password: 'long enough pw' })

    expect(list.status).toBe(403)
    expect(list.body.error).toEqual({ code: 'forbidden', message: 'Your role does not allow this' })
    expect(create.status).toBe(403)
  })

  it('when nobody is signed in, then 401', async () => {
    expect((await request(ctx.app).get('/api/users')).status).toBe(401)
  })

  it('when an admin lists people, then every person comes with role, state and projects, without password hashes', async () => {
    const { org, admin, agent } = await firm()
    await makeUser(ctx.db, org, 'technician', { displayName: 'Bea Tech' })

    const res = await agent.get('/api/users')

    expect(res.status).toBe(200)
    expect(res.body.users.map((u: { displayName: string }) => u.displayName)).toEqual([admin.displayName, 'Bea Tech'].sort())
    expect(JSON.stringify(res.body)).not.toMatch(/scrypt|passwordHash/)
  })

  it('when an admin creates a person, then they can sign in with the given password and the audit trail has it', async () => {
    const { agent, admin } = await firm()

    const res = await agent
      .post('/api/users')
      .send({ email: 'New.Person@Firm.test', displayName: 'New Person', role: 'contractor', password: 'a long password' })

    expect(res.status).toBe(201)
    expect(res.body.user).toMatchObject({ email: 'new.person@firm.test', role: 'contractor', active: true })
    await request(ctx.app).post('/api/session').send({ email: 'new.person@firm.test', password: 'a long password' }).expect(200)
    const audit = await ctx.db.getRepository(AuditEvent).findOneByOrFail({ action: 'user.create' })
    expect(audit).toMatchObject({ actorId: admin.id, entityId: res.body.user.id })
    expect(audit.after).toEqual({ email: 'new.person@firm.test', displayName: 'New Person', role: 'contractor', active: true })
  })

  it('when the input is bad, then 400 names every field', async () => {
    const { agent } = await firm()

    const res = await agent.post('/api/users').send({ email: 'nope', displayName: '', role: 'superuser', password: 'short' })

    expect(res.status).toBe(400)
    expect(res.body.error.fields).toEqual({
      email: 'Email must be a valid address',
      displayName: 'Name is required',
      role: 'Role must be one of admin, technician, owner_rep, contractor',
      password: 'Password must be at least 10 characters',
    })
  })

  it('when the email is already used, then 409 names the field', async () => {
    const { agent, admin } = await firm()
    const res = await agent.post('/api/users').send({ email: admin.email, displayName: 'Dup', role: 'technician', password: 'a long password' })
    expect(res.status).toBe(409)
    expect(res.body.error.fields).toEqual({ email: 'This email is already in use' })
  })

  it('when an admin changes a role and deactivates someone, then it is saved with before and after in the audit trail', async () => {
    const { org, agent } = await firm()
    const tech = await makeUser(ctx.db, org, 'technician')

    const promoted = await agent.patch(`/api/users/${tech.id}`).send({ role: 'owner_rep' })
    const deactivated = await agent.patch(`/api/users/${tech.id}`).send({ active: false })

    expect(promoted.body.user.role).toBe('owner_rep')
    expect(deactivated.body.user.active).toBe(false)
    const events = await ctx.db.getRepository(AuditEvent).find({ where: { action: 'user.update' }, order: { id: 'ASC' } })
    expect(events.map((e) => [e.before, e.after])).toEqual([
      [{ displayName: tech.displayName, role: 'technician', active: true }, { displayName: tech.displayName, role: 'owner_rep', active: true }],
      [{ displayName: tech.displayName, role: 'owner_rep', active: true }, { displayName: tech.displayName, role: 'owner_rep', active: false }],
    ])
  })

  it('when an admin would lock themselves out, then 409 and nothing changes', async () => {
    const { admin, agent } = await firm()
    const res = await agent.patch(`/api/users/${admin.id}`).send({ active: false })
    expect(res.status).toBe(409)
    expect(res.body.error.code).toBe('self_lockout')
    expect((await agent.get('/api/session')).status).toBe(200)
  })

  it('when the patch is empty, the id is not a UUID or the person does not exist, then 400, 400 and 404', async () => {
    const { agent } = await firm()
    const empty = await agent.patch('/api/users/00000000-0000-4000-8000-000000000000').send({})
    const badId = await agent.patch('/api/users/42').send({ role: 'admin' })
    const missing = await agent.patch('/api/users/00000000-0000-4000-8000-000000000000').send({ role: 'admin' })
    const badType = await agent.patch('/api/users/00000000-0000-4000-8000-000000000000').send({ active: 'no' })

    expect(empty.status).toBe(400)
    expect(empty.body.error.message).toBe('Give at least one of displayName, role, active')
    expect(badId.status).toBe(400)
    expect(badId.body.error.fields).toEqual({ 'params.userId': 'userId must be a UUID' })
    expect(missing.status).toBe(404)
    expect(badType.status).toBe(400)
    expect(Object.keys(badType.body.error.fields)).toEqual(['active'])
  })
})

describe('PUT /api/account/password', () => {
  it('when the current password is right, then the new one works, the old one does not, and other devices are signed out', async () => {
    const org = await makeOrganization(ctx.db)
    const rep = await makeUser(ctx.db, org, 'owner_rep')
    const tablet = await signedInAgent(ctx.app, rep)
    const laptop = await signedInAgent(ctx.app, rep)

    const res = await laptop.put('/api/account/password').send({ currentPassword: rep.password, newPassword: 'an entirely new one' })

    expect(res.status).toBe(204)
    expect((await laptop.get('/api/session')).status).toBe(200)
    expect((await tablet.get('/api/session')).status).toBe(401)
    await request(ctx.app).post('/api/session').send({ email: rep.email, password: rep.password }).expect(401)
    await request(ctx.app).post('/api/session').send({ email: rep.email, password: 'an entirely new one' }).expect(200)
  })

  it('when the current password is wrong or the new one is too short or unchanged, then 400 names the field', async () => {
    const org = await makeOrganization(ctx.db)
    const tech = await makeUser(ctx.db, org, 'technician')
    const agent = await signedInAgent(ctx.app, tech)

    const wrong = await agent.put('/api/account/password').send({ currentPassword: 'not mine at all', newPassword: 'an entirely new one' })
    const short = await agent.put('/api/account/password').send({ currentPassword: tech.password, newPassword: 'short' })
    const same = await agent.put('/api/account/password').send({ currentPassword: tech.password, newPassword: tech.password })

    expect(wrong.status).toBe(400)
    expect(wrong.body.error.fields).toEqual({ currentPassword: 'Current password is incorrect' })
    expect(short.body.error.fields).toEqual({ newPassword: 'New password must be at least 10 characters' })
    expect(same.body.error.fields).toEqual({ newPassword: 'New password must differ from the current one' })
  })

  it('when not signed in, then 401', async () => {
    expect((await request(ctx.app).put('/api/account/password').send({ currentPassword: 'a', newPassword: 'bbbbbbbbbbbb' })).status).toBe(401)
  })
})
