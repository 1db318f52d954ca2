import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest'
import { barometricFromElevationKpa } from '@shared/engineering'
import { createTestContext, resetDatabase, type TestContext } from '../helpers/context'
import { readyRun } from '../helpers/runs'

// The site's barometric pressure on the project and on the run (docs/REFERENCES.md §Refrigerant saturation and site
// barometric pressure): bad values are refused naming the field; a change reaches the runs in progress.
let ctx: TestContext
beforeAll(async () => {
  ctx = await createTestContext()
})
afterAll(async () => {
  await ctx.close()
})
beforeEach(async () => {
  await resetDatabase(ctx.db)
})

const change = (body: Record<string, unknown>, baseVersion = 0) => ({ changeId: randomUUID(), baseVersion, ...body })

describe('site barometric pressure', () => {
  it('when the project gets a barometric pressure outside 60–110 kPa, an elevation outside −500…5000 m, or text, then 400 names each field', async () => {
    const s = await readyRun(ctx)
    const url = `/api/projects/${s.project.id}`
    const cases: Array<[Record<string, unknown>, string, RegExp]> = [
      [{ barometricKpa: 59.9 }, 'barometricKpa', /at least 60 kPa/],
      [{ barometricKpa: 110.5 }, 'barometricKpa', /at most 110 kPa/],
      [{ barometricKpa: '84' }, 'barometricKpa', /must be a number/],
      [{ siteElevationM: 5001 }, 'siteElevationM', /at most 5000 m/],
      [{ siteElevationM: -600 }, 'siteElevationM', /at least −500 m/],
      [{ siteElevationM: true }, 'siteElevationM', /must be a number/],
    ]
    for (const [body, field, message] of cases) {
      const res = await s.adminAgent.patch(url).send({ ...body, version: 1 })
      expect(res.status, JSON.stringify(body)).toBe(400)
      expect(res.body.error.fields[field], JSON.stringify(body)).toMatch(message)
    }
    expect((await s.adminAgent.get(url)).body.project).toMatchObject({ siteElevationM: null, barometricKpa: null, version: 1 })
  })

  it('when the admin gives the site an elevation, then the run in progress reads its gauges against that atmosphere, and a stated pressure wins', async () => {
    const s = await readyRun(ctx)
    const before = (await s.techAgent.get(`/api/runs/${s.run.id}`)).body.run
    expect(before.siteBarometricKpa).toBeCloseTo(101.325, 6)
    const res = await s.adminAgent.patch(`/api/projects/${s.project.id}`).send({ siteElevationM: 1610, version: 1 })
    expect(res.status).toBe(200)
    expect(res.body.project).toMatchObject({ siteElevationM: 1610, barometricKpa: null })
    const atAltitude = (await s.techAgent.get(`/api/runs/${s.run.id}`)).body.run
    // ASHRAE Handbook—Fundamentals, Psychrometrics eq. 3: 101.325 × (1 − 2.25577e−5 × 1610)^5.2559 ≈ 83.41 kPa.
    expect(atAltitude.siteBarometricKpa).toBeCloseTo(barometricFromElevationKpa(1610), 6)
    expect(atAltitude.siteBarometricKpa).toBeCloseTo(83.41, 1)
    await s.adminAgent.patch(`/api/projects/${s.project.id}`).send({ barometricKpa: 85.2, version: 2 }).expect(200)
    expect((await s.techAgent.get(`/api/runs/${s.run.id}`)).body.run.siteBarometricKpa).toBe(85.2)
  })

  it("when the run's own barometric reading is outside 60–110 kPa, then 400 names the field and nothing is kept", async () => {
    const s = await readyRun(ctx)
    const url = `/api/runs/${s.run.id}/readings/barometricPressure`
    const bad = await s.techAgent.put(url).send(change({ entry: { value: 12, unit: 'inHgAbs' } }))
    expect(bad.status).toBe(400)
    expect(JSON.stringify(bad.body.error)).toMatch(/outside 60–110 kPa/)
    const run = (await s.techAgent.get(`/api/runs/${s.run.id}`)).body.run
    expect(run.readings.barometricPressure.entry).toBeNull()
  })
})
