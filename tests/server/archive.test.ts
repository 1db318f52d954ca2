import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest'
import type { ReportRenderer, ReportService } from '../../server/services/report.service'
import { createTestContext, makeUser, resetDatabase, signedInAgent, type TestContext } from '../helpers/context'
import { issueReport, makeSignable, readyRun } from '../helpers/runs'

let ctx: TestContext
const services = () => ctx.services

beforeAll(async () => {
  ctx = await createTestContext({ CERT_DIR: `/tmp/startproof-archive-certs-${process.pid}` })
})
afterAll(async () => {
  await services().renderer.close()
  await ctx.close()
})
beforeEach(() => resetDatabase(ctx.db))

type Scenario = Awaited<ReturnType<typeof readyRun>>

const issue = (s: Scenario, runId: string) => issueReport(s, runId, services().reports)

describe('/api/archive', () => {
  it('when two reports of one chiller exist, then filters, text search, pages and the superseded link all work', async () => {
    const s = await readyRun(ctx)
    await s.techAgent.put(`/api/runs/${s.run.id}/steps/oil-running`).send({ changeId: randomUUID(), baseVersion: 0, note: 'Gauge calibrated against the reference transducer' }).expect(200)
    const first = await issue(s, s.run.id)
    const retest = (await s.techAgent.post(`/api/equipment/${s.equipment.id}/runs`).send({ templateId: s.template.id }).expect(201)).body.run
    await makeSignable(s.techAgent, retest)
    await s.techAgent.put(`/api/runs/${retest.id}/readings/oilPressureRunning`).send({ changeId: randomUUID(), baseVersion: 1, entry: { value: 18, unit: 'psid' }, justification: 'Known gauge fault, see the controller reading' }).expect(200)
    const second = await issue(s, retest.id)

    const all = (await s.repAgent.get('/api/archive')).body
    expect(all.total).toBe(2)
    expect(all.items.map((i: { reportNumber: string }) => i.reportNumber)).toEqual([second, first])
    expect(all.items[1]).toMatchObject({ reportNumber: first, equipmentTag: 'CH-7', supersededBy: second, failCount: 0 })
    expect(all.items[0]).toMatchObject({ supersededBy: null, failCount: 1, technicianName: 'Ada Tech' })

    expect((await s.repAgent.get('/api/archive?hasFails=true')).body.items.map((i: { reportNumber: string }) => i.reportNumber)).toEqual([second])
    expect((await s.repAgent.get('/api/archive?q=calibrated')).body.items.map((i: { reportNumber: string }) => i.reportNumber)).toEqual([first])
    expect((await s.repAgent.get('/api/archive?q=TW-7')).body.total).toBe(2)
    expect((await s.repAgent.get(`/api/archive?equipmentId=${s.equipment.id}&sort=oldest`)).body.items[0].reportNumber).toBe(first)
    // Days are the site's days: the project is in America/Chicago, so "today" is Chicago's date, whatever UTC says.
    const dayIn = (zone: string, shiftDays = 0) => new Intl.DateTimeFormat('en-CA', { timeZone: zone }).format(new Date(Date.now() + shiftDays * 86_400_000))
    const today = dayIn('America/Chicago')
    expect((await s.repAgent.get(`/api/archive?from=${today}&to=${today}`)).body.total).toBe(2)
    expect((await s.repAgent.get(`/api/archive?to=${dayIn('America/Chicago', -1)}`)).body.total).toBe(0)
    expect((await s.repAgent.get(`/api/archive?from=${dayIn('America/Chicago', 1)}`)).body.total).toBe(0)
    expect((await s.repAgent.get('/api/archive?to=2000-01-01')).body.total).toBe(0)

    const page1 = (await s.repAgent.get('/api/archive?limit=1')).body
    const page2 = (await s.repAgent.get(`/api/archive?limit=1&cursor=${page1.nextCursor}`)).body
    expect([page1.items[0].reportNumber, page2.items[0].reportNumber]).toEqual([second, first])
    expect(page2.nextCursor).toBeNull()

    // A project moved to another zone later changes nothing issued: the reports keep the zone they were accepted in.
    await ctx.db.query(`UPDATE project SET time_zone = 'Pacific/Kiritimati' WHERE id = $1`, [s.project.id])
    expect((await s.repAgent.get(`/api/archive?from=${today}&to=${today}`)).body.total).toBe(2)
    expect((await s.repAgent.get('/api/archive')).body.items[0].projectTimeZone).toBe('America/Chicago')
    // A report accepted once the site is 14 hours ahead of UTC falls on that site's date.
    const third = (await s.techAgent.post(`/api/equipment/${s.equipment.id}/runs`).send({ templateId: s.template.id }).expect(201)).body.run
    await makeSignable(s.techAgent, third)
    await issue(s, third.id)
    const there = dayIn('Pacific/Kiritimati')
    expect((await s.repAgent.get(`/api/archive?from=${there}&to=${there}`)).body.total).toBe(there === today ? 3 : 1)
    expect((await s.repAgent.get(`/api/archive?from=${today}&to=${today}`)).body.total).toBe(there === today ? 3 : 2)
    expect((await s.repAgent.get('/api/archive')).body.items.map((i: { projectTimeZone: string }) => i.projectTimeZone)).toEqual(['Pacific/Kiritimati', 'America/Chicago', 'America/Chicago'])
  }, 120_000)

  it('when filters are malformed or name unknown ids, then 400 names the parameter', async () => {
    const s = await readyRun(ctx)
    const cases = [
      ['from=2026-13-45', 'query.from'],
      ['from=yesterday', 'query.from'],
      ['from=2026-02-01&to=2026-01-01', 'query.from'],
      ['projectId=nope', 'query.projectId'],
      [`projectId=${randomUUID()}`, 'query.projectId'],
      [`equipmentId=${randomUUID()}`, 'query.equipmentId'],
      ['limit=0', 'query.limit'],
      ['cursor=abc', 'query.cursor'],
      ['sort=sideways', 'query.sort'],
      ['hasFails=maybe', 'query.hasFails'],
    ] as const
    for (const [query, param] of cases) {
      const res = await s.repAgent.get(`/api/archive?${query}`)
      expect(res.status, query).toBe(400)
      expect(Object.keys(res.body.error.fields), query).toContain(param)
    }
  })

  it('when a contractor is not on the project, then they see none of its reports', async () => {
    const s = await readyRun(ctx)
    await issue(s, s.run.id)
    const outsider = await signedInAgent(ctx.app, await makeUser(ctx.db, s.org, 'contractor'))
    expect((await outsider.get('/api/archive')).body).toEqual({ total: 0, nextCursor: null, items: [] })
    expect((await outsider.get(`/api/archive?projectId=${s.project.id}`)).status).toBe(400)
    expect((await outsider.get(`/api/runs/${s.run.id}/report.pdf`)).status).toBe(404)
  }, 60_000)
})
