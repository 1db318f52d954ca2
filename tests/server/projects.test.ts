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
