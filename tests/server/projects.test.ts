import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest'
import { createTestContext, makeOrganization, makeProject, makeUser, resetDatabase, signedInAgent, type TestContext } from '../helpers/context'

let ctx: TestContext
beforeAll(async () => {
  ctx = await createTestContext()
})
afterAll(() => ctx.close())
beforeEach(() => resetDatabase(ctx.db))

async function scenario() {
  const org = await makeOrganization(ctx.db)
  const otherFirm = await makeOrganization(ctx.db, 'Another Firm')
  const admin = await makeUser(ctx.db, org, 'admin')
  const tech = await makeUser(ctx.db, org, 'technician')
  const rep = await makeUser(ctx.db, org, 'owner_rep')
  const contractor = await makeUser(ctx.db, org, 'contractor')
  const outsider = await makeUser(ctx.db, org, 'contractor')
  const mine = await makeProject(ctx.db, org, [tech.id, rep.id, contractor.id])
  const notMine = await makeProject(ctx.db, org, [outsider.id])
  const foreign = await makeProject(ctx.db, otherFirm)
  return { admin, tech, rep, contractor, outsider, mine, notMine, foreign }
}

describe('project membership', () => {
  it.each(['tech', 'rep', 'contractor'] as const)('when the %s is a member, then they see the project and its members', async (who) => {
    const s = await scenario()
    const agent = await signedInAgent(ctx.app, s[who])

    const list = await agent.get('/api/projects')
    const one = await agent.get(`/api/projects/${s.mine.id}`)
    const members = await agent.get(`/api/projects/${s.mine.id}/members`)

    expect(list.body.projects.map((p: { id: string }) => p.id)).toEqual([s.mine.id])
    expect(one.status).toBe(200)
    expect(one.body.project).toMatchObject({ id: s.mine.id, code: s.mine.code, memberCount: 3 })
    expect(members.body.members.map((m: { userId: string }) => m.userId).sort()).toEqual([s.tech.id, s.rep.id, s.contractor.id].sort())
  })

  it.each(['tech', 'rep', 'contractor'] as const)('when the %s is not a member, then the project answers 404 as if it did not exist', async (who) => {
    const s = await scenario()
    const agent = await signedInAgent(ctx.app, s[who])

    const one = await agent.get(`/api/projects/${s.notMine.id}`)
    const members = await agent.get(`/api/projects/${s.notMine.id}/members`)

    expect(one.status).toBe(404)
    expect(one.body.error).toEqual({ code: 'not_found', message: 'Project was not found' })
    expect(members.status).toBe(404)
  })

  it("when an admin asks, then they see every project of their own firm but not another firm's", async () => {
    const s = await scenario()
    const agent = await signedInAgent(ctx.app, s.admin)

    const list = await agent.get('/api/projects')

    expect(list.body.projects.map((p: { id: string }) => p.id).sort()).toEqual([s.mine.id, s.notMine.id].sort())
    expect((await agent.get(`/api/projects/${s.notMine.id}`)).status).toBe(200)
    expect((await agent.get(`/api/projects/${s.foreign.id}`)).status).toBe(404)
  })

  it('when the project id is malformed, then 400 names the parameter', async () => {
    const s = await scenario()
    const agent = await signedInAgent(ctx.app, s.tech)
    const res = await agent.get('/api/projects/not-a-uuid')
    expect(res.status).toBe(400)
    expect(res.body.error.fields).toEqual({ 'params.projectId': 'projectId must be a UUID' })
  })
})

describe('project administration', () => {
  const body = {
    code: 'nw-plant',
    name: 'North wing plant',
    siteName: 'Test campus',
    siteAddress: '2 Test Way',
    timeZone: 'America/Denver',
    unitSystem: 'SI',
    distributionList: ['Owner@Client.test', 'closeout@contractor.test'],
  }

  it('when an admin creates a project, then it is saved normalised and the audit trail has it', async () => {
    const s = await scenario()
    const agent = await signedInAgent(ctx.app, s.admin)

    const res = await agent.post('/api/projects').send(body)

    expect(res.status).toBe(201)
    expect(res.body.project).toMatchObject({ code: 'NW-PLANT', unitSystem: 'SI', distributionList: ['owner@client.test', 'closeout@contractor.test'], memberCount: 0, equipmentCount: 0 })
    const [event] = await ctx.db.query(`SELECT action, after FROM audit_event WHERE action = 'project.create'`)
    expect(event.after.code).toBe('NW-PLANT')
  })

  it.each(['tech', 'rep', 'contractor'] as const)('when a %s tries to create, edit, delete or change members, then 403', async (who) => {
    const s = await scenario()
    const agent = await signedInAgent(ctx.app, s[who])
    expect((await agent.post('/api/projects').send(body)).status).toBe(403)
    expect((await agent.patch(`/api/projects/${s.mine.id}`).send({ name: 'X' })).status).toBe(403)
    expect((await agent.delete(`/api/projects/${s.mine.id}`)).status).toBe(403)
    expect((await agent.put(`/api/projects/${s.mine.id}/members/${s.outsider.id}`)).status).toBe(403)
    expect((await agent.delete(`/api/projects/${s.mine.id}/members/${s.tech.id}`)).status).toBe(403)
  })

  it('when the input is bad, then 400 names each field', async () => {
    const s = await scenario()
    const agent = await signedInAgent(ctx.app, s.admin)
    const res = await agent.post('/api/projects').send({ ...body, code: '!', timeZone: 'Mars/Olympus', unitSystem: 'metric', distributionList: ['not-an-email'] })
    expect(res.status).toBe(400)
    expect(res.body.error.fields).toMatchObject({
      code: 'Project code must be 2–20 letters, digits or hyphens, e.g. VXH-CUP',
      timeZone: 'Time zone must be an IANA zone such as America/Chicago',
      unitSystem: 'Unit system must be IP or SI',
      'distributionList[0]': 'not-an-email is not a valid email address',
    })
  })

  it('when the code is taken, then 409 names the field', async () => {
    const s = await scenario()
    const agent = await signedInAgent(ctx.app, s.admin)
    const res = await agent.post('/api/projects').send({ ...body, code: s.mine.code })
    expect(res.status).toBe(409)
    expect(res.body.error.fields).toEqual({ code: 'This project code is already used' })
  })

  it('when an admin edits a project, then before and after are audited', async () => {
    const s = await scenario()
    const agent = await signedInAgent(ctx.app, s.admin)
    const res = await agent.patch(`/api/projects/${s.mine.id}`).send({ unitSystem: 'SI', distributionList: ['a@b.test'], version: 1 })
    expect(res.status).toBe(200)
    expect(res.body.project).toMatchObject({ unitSystem: 'SI', distributionList: ['a@b.test'], version: 2 })
    expect(res.body.runs).toEqual({ rejudged: [], voided: [] })
    const [event] = await ctx.db.query(`SELECT before, after FROM audit_event WHERE action = 'project.update'`)
    expect([event.before.unitSystem, event.after.unitSystem]).toEqual(['IP', 'SI'])
  })

  it('when an edit leaves out its version or sends a bad one, then 400 names the version field', async () => {
    const s = await scenario()
    const agent = await signedInAgent(ctx.app, s.admin)
    const missing = await agent.patch(`/api/projects/${s.mine.id}`).send({ name: 'Renamed' })
    const wrong = await agent.patch(`/api/projects/${s.mine.id}`).send({ name: 'Renamed', version: 'one', confirmVoid: 'yes' })
    const onlyVersion = await agent.patch(`/api/projects/${s.mine.id}`).send({ version: 1 })
    expect(missing.status).toBe(400)
    expect(missing.body.error.fields).toEqual({ version: 'version is required: send the version of the record you edited' })
    expect(wrong.status).toBe(400)
    expect(wrong.body.error.fields).toEqual({ version: 'version must be a whole number', confirmVoid: 'confirmVoid must be true or false' })
    expect(onlyVersion.status).toBe(400)
    expect(onlyVersion.body.error.message).toBe('Give at least one field to change')
    expect((await agent.get(`/api/projects/${s.mine.id}`)).body.project).toMatchObject({ name: s.mine.name, version: 1 })
  })

  it('when an admin adds and removes members, then membership follows and the new member can see the project', async () => {
    const s = await scenario()
    const agent = await signedInAgent(ctx.app, s.admin)

    const added = await agent.put(`/api/projects/${s.mine.id}/members/${s.outsider.id}`)
    const outsider = await signedInAgent(ctx.app, s.outsider)
    expect(added.status).toBe(200)
    expect(added.body.members.map((m: { userId: string }) => m.userId)).toContain(s.outsider.id)
    expect((await outsider.get(`/api/projects/${s.mine.id}`)).status).toBe(200)

    const removed = await agent.delete(`/api/projects/${s.mine.id}/members/${s.outsider.id}`)
    expect(removed.body.members.map((m: { userId: string }) => m.userId)).not.toContain(s.outsider.id)
    expect((await outsider.get(`/api/projects/${s.mine.id}`)).status).toBe(404)
    expect((await agent.delete(`/api/projects/${s.mine.id}/members/${s.outsider.id}`)).status).toBe(404)
  })

  it('when an empty project is deleted, then it is gone and audited; a missing one answers 404', async () => {
    const s = await scenario()
    const agent = await signedInAgent(ctx.app, s.admin)
    await agent.delete(`/api/projects/${s.notMine.id}`).expect(204)
    expect((await agent.get(`/api/projects/${s.notMine.id}`)).status).toBe(404)
    expect((await agent.delete(`/api/projects/${s.notMine.id}`)).status).toBe(404)
    const [event] = await ctx.db.query(`SELECT project_id, entity_id, before FROM audit_event WHERE action = 'project.delete'`)
    expect(event).toMatchObject({ project_id: s.notMine.id, entity_id: s.notMine.id, before: { code: s.notMine.code } })
  })

  it('when a project created, edited and staffed through the API is deleted, then 204 and its audit trail keeps its id', async () => {
    const s = await scenario()
    const agent = await signedInAgent(ctx.app, s.admin)
    const created = (await agent.post('/api/projects').send(body).expect(201)).body.project
    await agent.patch(`/api/projects/${created.id}`).send({ name: 'North wing plant, phase 2', version: created.version }).expect(200)
    await agent.put(`/api/projects/${created.id}/members/${s.tech.id}`).expect(200)

    const res = await agent.delete(`/api/projects/${created.id}`)

    expect(res.status).toBe(204)
    expect((await agent.get(`/api/projects/${created.id}`)).status).toBe(404)
    const events = await ctx.db.query(`SELECT action FROM audit_event WHERE project_id = $1 ORDER BY id`, [created.id])
    expect(events.map((e: { action: string }) => e.action)).toEqual(['project.create', 'project.update', 'project.member_add', 'project.delete'])
  })

  it('when the audit trail is asked to change, then the database still refuses it', async () => {
    const s = await scenario()
    const agent = await signedInAgent(ctx.app, s.admin)
    await agent.post('/api/projects').send(body).expect(201)
    await expect(ctx.db.query(`UPDATE audit_event SET project_id = NULL`)).rejects.toThrow(/append-only/)
    await expect(ctx.db.query(`DELETE FROM audit_event`)).rejects.toThrow(/append-only/)
  })
})
