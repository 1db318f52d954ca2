import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import request from 'supertest'
import { DEMO_PEOPLE, isEmpty, loadDemoData } from '../../server/db/demo-data'
import { createTestContext, resetDatabase, type TestContext } from '../helpers/context'

let ctx: TestContext
beforeAll(async () => {
  ctx = await createTestContext()
  await resetDatabase(ctx.db)
})
afterAll(() => ctx.close())

describe('demo data', () => {
  it('when loaded into an empty database, then every demo person signs in and sees their projects and equipment', async () => {
    expect(await isEmpty(ctx.db)).toBe(true)
    await loadDemoData(ctx.db)
    expect(await isEmpty(ctx.db)).toBe(false)

    const roles = new Set(DEMO_PEOPLE.map((p) => p.role))
    expect([...roles].sort()).toEqual(['admin', 'contractor', 'owner_rep', 'technician'])
    for (const person of DEMO_PEOPLE) {
      const agent = request.agent(ctx.app)
      await agent.post('/api/session').send({ email: person.email, password: person.password }).expect(200)
      const projects = (await agent.get('/api/projects')).body.projects
      expect(projects.length).toBeGreaterThan(0)
      for (const p of projects) {
        const equipment = await agent.get(`/api/projects/${p.id}/equipment`)
        expect(equipment.status).toBe(200)
        expect(equipment.body.equipment.length).toBe(p.equipmentCount)
      }
    }
    const emails = DEMO_PEOPLE.map((p) => p.email)
    expect(emails.every((e) => e.endsWith('.test'))).toBe(true)
  })
})
