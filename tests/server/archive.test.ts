import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest'
import type { ReportRenderer, ReportService } from '../../server/services/report.service'
import type { ArchiveItem } from '@shared/types/archive'
import type { SessionUser } from '@shared/types/api'
import { indexReportsFromSnapshots } from '../../server/migrations/1764730000000-CheckSupersession'
import { asOwner, createTestContext, makeUser, resetDatabase, signedInAgent, type TestContext } from '../helpers/context'
import { fillRetest, issueReport, makeSignable, readyRun } from '../helpers/runs'

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

  it('when a re-test repeats only some checks, then the baseline is partly superseded; a row without its check index falls back to the whole-report rule until it is indexed from its snapshot', async () => {
    const s = await readyRun(ctx)
    const baseline = await issue(s, s.run.id)
    const retest = (await s.techAgent.post(`/api/equipment/${s.equipment.id}/runs`).send({ templateId: s.template.id }).expect(201)).body.run
    // The oil pressure again (the safety items are answered on every visit and count for neither); the oil temperature
    // carried over from the baseline.
    await fillRetest(s.techAgent, retest, { read: { oilPressureRunning: { value: 37, unit: 'psid' } }, carryFields: { oilTempRunning: baseline } })
    const second = await issue(s, retest.id)
    const archived = async (): Promise<Record<string, ArchiveItem>> => Object.fromEntries(((await s.repAgent.get('/api/archive').expect(200)).body.items as ArchiveItem[]).map((i) => [i.reportNumber, i]))
    const words = `Partly superseded: 1 of 2 checks re-tested in ${second}`
    let items = await archived()
    expect(items[baseline]).toMatchObject({ supersededBy: null, supersession: { state: 'partly', words, by: [{ reportNumber: second, checks: 1 }] } })
    expect(items[second].supersession).toMatchObject({ state: 'current', retest: expect.stringContaining(`1 check carried over from ${baseline}.`) })
    // The handover package's copy of the archive row carries the same.
    const rep = (await s.repAgent.get('/api/session').expect(200)).body.user as SessionUser
    expect((await ctx.services.archive.itemsFor(rep, { reportNumbers: [baseline] }))[0].supersession.words).toBe(words)

    // As a report issued before check indexes were kept: unindexed, it is superseded as a whole by any later report.
    const [{ check_index: kept }] = await ctx.db.query(`SELECT check_index FROM report WHERE report_number = $1`, [baseline])
    const owner = (sql: string, params?: unknown[]) => asOwner(async (c) => (await c.query(sql, params)).rows, ctx.db)
    await asOwner(async (c) => {
      await c.query(`ALTER TABLE report DISABLE TRIGGER report_frozen`)
      await c.query(`UPDATE report SET check_index = NULL WHERE report_number = $1`, [baseline])
      await c.query(`ALTER TABLE report ENABLE TRIGGER report_frozen`)
    }, ctx.db)
    items = await archived()
    expect(items[baseline]).toMatchObject({ supersededBy: second, supersession: { state: 'superseded', words: `Superseded by ${second}` } })

    // The migration's backfill indexes it again from its kept snapshot, with the same counting rule.
    const indexed = await asOwner(async (c) => {
      await c.query(`ALTER TABLE report DISABLE TRIGGER report_frozen`)
      try {
        return await indexReportsFromSnapshots({ query: async (sql, params) => (await c.query(sql, params)).rows })
      } finally {
        await c.query(`ALTER TABLE report ENABLE TRIGGER report_frozen`)
      }
    }, ctx.db)
    expect(indexed).toBe(1)
    expect((await owner(`SELECT check_index FROM report WHERE report_number = $1`, [baseline]))[0].check_index).toEqual(kept)
    expect((await archived())[baseline].supersession.words).toBe(words)
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
