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

describe('starter library', () => {
  it('when the demo loads, then both starter templates are published as version 1 and a technician can read them', async () => {
    const tech = DEMO_PEOPLE.find((p) => p.role === 'technician')!
    const agent = request.agent(ctx.app)
    await agent.post('/api/session').send({ email: tech.email, password: tech.password }).expect(200)

    const list = await agent.get('/api/templates')
    expect(list.body.templates.map((t: { key: string }) => t.key).sort()).toEqual(['centrifugal-chiller-startup', 'pump-startup'])
    for (const t of list.body.templates) {
      expect(t.latestPublishedNumber).toBe(1)
      const v1 = await agent.get(`/api/templates/${t.id}/versions/1`)
      expect(v1.body.version).toMatchObject({ status: 'published', publishedByName: 'Dana Whitlock' })
      expect(v1.body.version.fieldCount).toBeGreaterThan(5)
    }
  })

  it('when a new organisation exists at start, then it gets the starter library, once', async () => {
    const { ensureStarterLibrary } = await import('../../server/services/starter-library')
    const { makeOrganization } = await import('../helpers/context')
    const org = await makeOrganization(ctx.db, 'A newly added firm')

    const first = await ensureStarterLibrary(ctx.db)
    const second = await ensureStarterLibrary(ctx.db)

    expect(first).toBe(2)
    expect(second).toBe(0)
    const [{ n }] = await ctx.db.query(`SELECT count(*)::int AS n FROM checklist_template WHERE organization_id = $1`, [org.id])
    expect(n).toBe(2)
  })
})
