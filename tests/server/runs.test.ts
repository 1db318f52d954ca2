import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest'
import request from 'supertest'
import { startCluster, stopCluster } from '../../server/db/cluster'
import { installStarterLibrary } from '../../server/services/starter-library'
import { designPoint } from '../shared/fixtures'
import { testCluster } from '../helpers/cluster'
import { createTestContext, makeOrganization, makeProject, makeUser, resetDatabase, signedInAgent, type TestContext } from '../helpers/context'

let ctx: TestContext
beforeAll(async () => {
  ctx = await createTestContext({ UPLOAD_MAX_MB: '1' })
})
afterAll(() => ctx.close())
beforeEach(() => resetDatabase(ctx.db))

// The invented 500-ton machine of the shared fixtures (AHRI 550/590 rating conditions, oil setpoint 35 psid).
const chiller = { tag: 'CH-1', kind: 'centrifugal_chiller', manufacturer: 'Test Works', model: 'TW-500', serialNumber: 'TW-1', designPoint }
const PNG = Buffer.from('iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mP8z8DwHwAFBQIAX8jx0gAAAABJRU5ErkJggg==', 'base64')

async function scenario() {
  const org = await makeOrganization(ctx.db)
  const admin = await makeUser(ctx.db, org, 'admin')
  const tech = await makeUser(ctx.db, org, 'technician', { displayName: 'Ada Tech' })
  const tech2 = await makeUser(ctx.db, org, 'technician', { displayName: 'Ines Second' })
  const rep = await makeUser(ctx.db, org, 'owner_rep')
  const contractor = await makeUser(ctx.db, org, 'contractor')
  const outsider = await makeUser(ctx.db, org, 'technician')
  const project = await makeProject(ctx.db, org, [tech.id, tech2.id, rep.id, contractor.id])
  await ctx.db.transaction((tx) => installStarterLibrary(tx, org.id, admin.id))
  const adminAgent = await signedInAgent(ctx.app, admin)
  const equipment = (await adminAgent.post(`/api/projects/${project.id}/equipment`).send(chiller).expect(201)).body.equipment
  const templates = (await adminAgent.get('/api/templates')).body.templates as { id: string; key: string }[]
  const chillerTemplate = templates.find((t) => t.key === 'centrifugal-chiller-startup')!
  const pumpTemplate = templates.find((t) => t.key === 'pump-startup')!
  const techAgent = await signedInAgent(ctx.app, tech)
  return { org, admin, tech, tech2, rep, contractor, outsider, project, equipment, chillerTemplate, pumpTemplate, adminAgent, techAgent }
}

async function startRun(s: Awaited<ReturnType<typeof scenario>>) {
  const res = await s.techAgent.post(`/api/equipment/${s.equipment.id}/runs`).send({ templateId: s.chillerTemplate.id })
  expect(res.status).toBe(201)
  return res.body.run
}

const set = (agent: request.Agent, runId: string, fieldId: string, entry: unknown, baseVersion = 0, extra: Record<string, unknown> = {}) =>
  agent.put(`/api/runs/${runId}/readings/${fieldId}`).send({ changeId: randomUUID(), baseVersion, entry, ...extra })

describe('starting a run', () => {
  it('when a technician on the project starts one, then it pins the published version and every field starts incomplete', async () => {
    const s = await scenario()
    const run = await startRun(s)

    expect(run).toMatchObject({ state: 'in_progress', equipmentTag: 'CH-1', templateVersionNumber: 1, unitSystem: 'IP', startedByName: 'Ada Tech' })
    const readings = Object.values(run.readings) as { version: number; evaluation: { verdict: string } }[]
    expect(readings.length).toBeGreaterThan(40)
    expect(readings.every((r) => r.version === 0 && r.evaluation.verdict === 'incomplete')).toBe(true)
    expect(run.progress.answered).toBe(0)
    const [event] = await ctx.db.query(`SELECT action, after FROM audit_event WHERE action = 'run.start'`)
    expect(event.after).toMatchObject({ equipment: 'CH-1', template: 'centrifugal-chiller-startup', version: 1 })
  })

  it('when a later version is published, then a run already started keeps its version and a new one takes the new', async () => {
    const s = await scenario()
    const first = await startRun(s)
    await s.adminAgent.post(`/api/templates/${s.chillerTemplate.id}/versions`).send({}).expect(201)
    await s.adminAgent.post(`/api/templates/${s.chillerTemplate.id}/versions/2/publish`).send({ changelog: 'Second issue' }).expect(200)

    const second = await startRun(s)
    expect((await s.techAgent.get(`/api/runs/${first.id}`)).body.run.templateVersionNumber).toBe(1)
    expect(second.templateVersionNumber).toBe(2)
  })

  it('when someone other than a technician on the project tries, or the template is for another kind, then it is refused', async () => {
    const s = await scenario()
    for (const who of [s.admin, s.rep, s.contractor]) {
      const agent = await signedInAgent(ctx.app, who)
      expect((await agent.post(`/api/equipment/${s.equipment.id}/runs`).send({ templateId: s.chillerTemplate.id })).status).toBe(403)
    }
    const outsider = await signedInAgent(ctx.app, s.outsider)
    expect((await outsider.post(`/api/equipment/${s.equipment.id}/runs`).send({ templateId: s.chillerTemplate.id })).status).toBe(404)
    const wrongKind = await s.techAgent.post(`/api/equipment/${s.equipment.id}/runs`).send({ templateId: s.pumpTemplate.id })
    expect(wrongKind.status).toBe(409)
    expect(wrongKind.body.error.fields).toEqual({ templateId: 'This template is for another kind of equipment' })
    const bad = await s.techAgent.post(`/api/equipment/${s.equipment.id}/runs`).send({ templateId: 'nope' })
    expect(bad.status).toBe(400)
    expect(bad.body.error.fields).toEqual({ templateId: 'templateId must be a UUID' })
  })
})

describe('readings', () => {
  it('when a reading is saved, then the server judges it (Oil pressure 18 psid fails against the 35 psid design), versions it and audits it', async () => {
    const s = await scenario()
    const run = await startRun(s)

    const res = await set(s.techAgent, run.id, 'oilPressureRunning', { value: 18, unit: 'psid' })

    expect(res.status).toBe(200)
    expect(res.body.reading).toMatchObject({ fieldId: 'oilPressureRunning', version: 1, updatedByName: 'Ada Tech' })
    expect(res.body.reading.evaluation.verdict).toBe('fail')
    expect(res.body.reading.evaluation.message).toBe('Oil pressure (differential) 18 psid is below the minimum 29.8 psid (design 35 psid, −15 % to +50 %)')
    expect(res.body.progress).toMatchObject({ answered: 1, fail: 1 })
    const [event] = await ctx.db.query(`SELECT before, after FROM audit_event WHERE action = 'reading.set'`)
    expect(event.before.entry).toBeNull()
    expect(event.after).toMatchObject({ entry: { value: 18, unit: 'psid' }, verdict: 'fail' })
  })

  it('when the three phase voltages arrive, then the computed unbalance follows (NEMA MG 1 worked example 460/467/450 V → 1.96 %)', async () => {
    const s = await scenario()
    const run = await startRun(s)
    await set(s.techAgent, run.id, 'voltsAB', { value: 460, unit: 'V' }).expect(200)
    const partial = await set(s.techAgent, run.id, 'voltsBC', { value: 467, unit: 'V' })
    expect(partial.body.readings.voltageUnbalance.evaluation.verdict).toBe('incomplete')
    const full = await set(s.techAgent, run.id, 'voltsCA', { value: 450, unit: 'V' })

    const unbalance = full.body.readings.voltageUnbalance
    expect(unbalance.evaluation.canonical.value).toBeCloseTo(1.961, 3)
    // Above 1 % is marginal and above 2 % fails in the starter template (common practice).
    expect(unbalance.evaluation.verdict).toBe('marginal')
    expect(unbalance.version).toBe(0)
  })

  it('when the same change is sent twice (a retry after a lost answer), then it is applied once', async () => {
    const s = await scenario()
    const run = await startRun(s)
    const body = { changeId: randomUUID(), baseVersion: 0, entry: { value: 36, unit: 'psid' } }
    await s.techAgent.put(`/api/runs/${run.id}/readings/oilPressureRunning`).send(body).expect(200)
    const again = await s.techAgent.put(`/api/runs/${run.id}/readings/oilPressureRunning`).send(body)
    expect(again.status).toBe(200)
    expect(again.body.duplicate).toBe(true)
    expect(again.body.reading.version).toBe(1)
    const [{ n }] = await ctx.db.query(`SELECT count(*)::int AS n FROM audit_event WHERE action = 'reading.set'`)
    expect(n).toBe(1)
  })

  it('when two technicians change one field from the same version, then the second gets a conflict naming who changed it, never an overwrite', async () => {
    const s = await scenario()
    const run = await startRun(s)
    const other = await signedInAgent(ctx.app, s.tech2)
    await set(other, run.id, 'oilPressureRunning', { value: 36, unit: 'psid' }, 0).expect(200)

    const mine = await set(s.techAgent, run.id, 'oilPressureRunning', { value: 33, unit: 'psid' }, 0)

    expect(mine.status).toBe(409)
    expect(mine.body.error.code).toBe('reading_conflict')
    expect(mine.body.error.message).toMatch(/^Ines Second changed Oil pressure \(differential\) to 36 psid at \d\d:\d\d UTC/)
    expect(mine.body.error.fields.oilPressureRunning).toMatch(/Changed by Ines Second/)
    expect(mine.body.current).toMatchObject({ version: 1, entry: { value: 36, unit: 'psid' } })
    const same = await set(s.techAgent, run.id, 'oilPressureRunning', { value: 36, unit: 'psid' }, 0)
    expect(same.status).toBe(200)
    const decided = await set(s.techAgent, run.id, 'oilPressureRunning', { value: 33, unit: 'psid' }, 1)
    expect(decided.status).toBe(200)
    expect(decided.body.reading).toMatchObject({ version: 2, entry: { value: 33, unit: 'psid' } })
  })

  it('when the input is wrong, then 400 names the field: unknown field, wrong unit, negative flow, impossible temperature, computed field, missing reason', async () => {
    const s = await scenario()
    const run = await startRun(s)
    const unknown = await set(s.techAgent, run.id, 'noSuchField', { value: 1, unit: 'V' })
    const wrongUnit = await set(s.techAgent, run.id, 'voltsAB', { value: 460, unit: 'psig' })
    const negativeFlow = await set(s.techAgent, run.id, 'chwFlow', { value: -5, unit: 'gpm' })
    const hot = await set(s.techAgent, run.id, 'chwLeaving', { value: 900, unit: 'degF' })
    const computed = await set(s.techAgent, run.id, 'voltageUnbalance', { value: 1, unit: '%' })
    const naNoReason = await set(s.techAgent, run.id, 'oilTempRunning', null, 0, { notApplicable: true })
    const notANumber = await set(s.techAgent, run.id, 'voltsAB', { value: 'high', unit: 'V' })

    expect(unknown.status).toBe(400)
    expect(unknown.body.error.fields).toEqual({ noSuchField: 'Not a field of this run’s checklist version' })
    expect(wrongUnit.status).toBe(400)
    expect(wrongUnit.body.error.fields.voltsAB).toMatch(/unit must be one of V, kV/)
    expect(negativeFlow.body.error.fields).toEqual({ chwFlow: 'Chilled-water flow −5 gpm cannot be negative' })
    expect(hot.body.error.fields.chwLeaving).toMatch(/outside −40 °C to 150 °C/)
    expect(computed.body.error.fields).toEqual({ voltageUnbalance: 'Computed from other readings' })
    expect(naNoReason.status).toBe(400)
    expect(naNoReason.body.error.fields).toEqual({ naReason: 'A reason is required when a field is marked not applicable' })
    expect(notANumber.status).toBe(400)
    const reading = (await s.techAgent.get(`/api/runs/${run.id}`)).body.run.readings.voltsAB
    expect(reading.version).toBe(0)
  })

  it('when a field is not applicable with a reason, then it counts apart and a fail can be justified', async () => {
    const s = await scenario()
    const run = await startRun(s)
    const na = await set(s.techAgent, run.id, 'oilTempRunning', null, 0, { notApplicable: true, naReason: 'Sump thermometer not fitted on this unit' })
    expect(na.status).toBe(200)
    expect(na.body.reading).toMatchObject({ notApplicable: true, naReason: 'Sump thermometer not fitted on this unit' })
    expect(na.body.progress.notApplicable).toBe(1)
    const justified = await set(s.techAgent, run.id, 'oilPressureRunning', { value: 18, unit: 'psid' }, 0, { justification: 'Gauge being replaced; confirmed 36 psid on the controller' })
    expect(justified.body.reading.justification).toMatch(/Gauge being replaced/)
  })

  it('when an owner rep reads the run, then they may but may not change it; a contractor does not see it until accepted', async () => {
    const s = await scenario()
    const run = await startRun(s)
    const rep = await signedInAgent(ctx.app, s.rep)
    const contractor = await signedInAgent(ctx.app, s.contractor)
    const outsider = await signedInAgent(ctx.app, s.outsider)

    expect((await rep.get(`/api/runs/${run.id}`)).status).toBe(200)
    expect((await set(rep, run.id, 'oilPressureRunning', { value: 36, unit: 'psid' })).status).toBe(403)
    expect((await contractor.get(`/api/runs/${run.id}`)).status).toBe(404)
    expect((await contractor.get('/api/runs')).body.runs).toEqual([])
    expect((await outsider.get(`/api/runs/${run.id}`)).status).toBe(404)
    expect((await s.techAgent.get('/api/runs?mine=true')).body.runs.map((r: { id: string }) => r.id)).toEqual([run.id])
    expect((await s.techAgent.get('/api/runs?state=nonsense')).status).toBe(400)
  })

  it('when a run is accepted, then the API refuses changes and the database refuses them too', async () => {
    const s = await scenario()
    const run = await startRun(s)
    await set(s.techAgent, run.id, 'oilPressureRunning', { value: 36, unit: 'psid' }).expect(200)
    await ctx.db.query(`UPDATE run SET state = 'accepted' WHERE id = $1`, [run.id])

    const res = await set(s.techAgent, run.id, 'oilPressureRunning', { value: 20, unit: 'psid' }, 1)
    expect(res.status).toBe(409)
    expect(res.body.error.code).toBe('run_locked')
    await expect(ctx.db.query(`UPDATE reading SET entry = '{"value": 1, "unit": "psid"}' WHERE run_id = $1`, [run.id])).rejects.toThrow(/accepted; its reading cannot be changed/)
    await expect(ctx.db.query(`UPDATE run SET state = 'in_progress' WHERE id = $1`, [run.id])).rejects.toThrow(/accepted and cannot be changed/)
    await expect(ctx.db.query(`DELETE FROM finding WHERE run_id = $1`, [run.id])).resolves.toBeDefined()
  })

  it('when the database stops in the middle of a run, then the save answers 503 and the same change goes through once it is back', async () => {
    const s = await scenario()
    const run = await startRun(s)
    const pg = testCluster()
    const body = { changeId: randomUUID(), baseVersion: 0, entry: { value: 36, unit: 'psid' } }
    stopCluster(pg.bin, pg.dataDir, 'fast')
    try {
      const down = await s.techAgent.put(`/api/runs/${run.id}/readings/oilPressureRunning`).send(body)
      expect(down.status).toBe(503)
    } finally {
      startCluster(pg.bin, { dataDir: pg.dataDir, port: pg.port, logFile: pg.logFile, throwaway: true })
    }
    const up = await s.techAgent.put(`/api/runs/${run.id}/readings/oilPressureRunning`).send(body)
    expect(up.status).toBe(200)
    expect(up.body.reading).toMatchObject({ version: 1, entry: { value: 36, unit: 'psid' } })
  })
})

describe('steps, findings, attachments and review', () => {
  it('when a step is marked not applicable with a reason and noted, then its fields count as not applicable', async () => {
    const s = await scenario()
    const run = await startRun(s)
    const res = await s.techAgent.put(`/api/runs/${run.id}/steps/oil-running`).send({ changeId: randomUUID(), baseVersion: 0, note: 'Oil readings from the panel', notApplicable: true, naReason: 'Oil system monitored by the drive' })
    expect(res.status).toBe(200)
    expect(res.body.step).toMatchObject({ note: 'Oil readings from the panel', notApplicable: true, version: 1 })
    const review = (await s.techAgent.get(`/api/runs/${run.id}/review`)).body.review
    expect(review.counts.notApplicable).toBe(2)
    expect(review.missingRequired.map((m: { fieldId: string }) => m.fieldId)).not.toContain('oilPressureRunning')
    const stale = await s.techAgent.put(`/api/runs/${run.id}/steps/oil-running`).send({ changeId: randomUUID(), baseVersion: 0, note: 'other' })
    expect(stale.status).toBe(409)
    expect(stale.body.error.code).toBe('step_conflict')
    const unknown = await s.techAgent.put(`/api/runs/${run.id}/steps/nope`).send({ changeId: randomUUID(), baseVersion: 0 })
    expect(unknown.status).toBe(400)
  })

  it('when a fail has neither a finding nor a justification, then the review blocks signing; a finding unblocks it and is resolved with how', async () => {
    const s = await scenario()
    const run = await startRun(s)
    await set(s.techAgent, run.id, 'oilPressureRunning', { value: 18, unit: 'psid' }).expect(200)

    const before = (await s.techAgent.get(`/api/runs/${run.id}/review`)).body.review
    expect(before.canSign).toBe(false)
    expect(before.problems).toContainEqual(expect.objectContaining({ fieldId: 'oilPressureRunning', verdict: 'fail', findingIds: [] }))
    expect(before.blockers).toContain('Oil pressure (differential) failed and has neither a finding nor a justification')
    expect(before.missingRequired.length).toBeGreaterThan(10)

    const created = await s.techAgent.post(`/api/runs/${run.id}/findings`).send({ stepId: 'oil-running', fieldId: 'oilPressureRunning', severity: 'major', description: 'Oil pressure low while running' })
    expect(created.status).toBe(201)
    const after = (await s.techAgent.get(`/api/runs/${run.id}/review`)).body.review
    expect(after.problems[0].findingIds).toEqual([created.body.finding.id])
    expect(after.blockers).not.toContain('Oil pressure (differential) failed and has neither a finding nor a justification')
    expect(after.openFindings).toHaveLength(1)

    const noHow = await s.techAgent.patch(`/api/runs/${run.id}/findings/${created.body.finding.id}`).send({ status: 'resolved', version: created.body.finding.version })
    expect(noHow.status).toBe(400)
    expect(noHow.body.error.fields).toEqual({ resolution: 'Say how it was resolved' })
    const resolved = await s.techAgent.patch(`/api/runs/${run.id}/findings/${created.body.finding.id}`).send({ status: 'resolved', resolution: 'Oil filter changed; 36 psid after', version: created.body.finding.version })
    expect(resolved.body.finding).toMatchObject({ status: 'resolved', resolution: 'Oil filter changed; 36 psid after', resolvedByName: 'Ada Tech' })
    const bad = await s.techAgent.post(`/api/runs/${run.id}/findings`).send({ stepId: 'oil-running', severity: 'awful', description: '' })
    expect(bad.status).toBe(400)
    expect(Object.keys(bad.body.error.fields).sort()).toEqual(['description', 'severity'])
    const rep = await signedInAgent(ctx.app, s.rep)
    expect((await rep.post(`/api/runs/${run.id}/findings`).send({ stepId: 'oil-running', severity: 'minor', description: 'x' })).status).toBe(403)
  })

  it('when a photo is attached to a step, then it is stored with its SHA-256 and a thumbnail; other files are refused', async () => {
    const s = await scenario()
    const run = await startRun(s)
    const res = await s.techAgent.post(`/api/runs/${run.id}/attachments`).field('stepId', 'training-record').field('fieldId', 'attendanceSheet').attach('file', PNG, { filename: 'sheet.png', contentType: 'image/png' })
    expect(res.status).toBe(201)
    expect(res.body.attachment).toMatchObject({ stepId: 'training-record', fieldId: 'attendanceSheet', mimeType: 'image/png', sizeBytes: PNG.length })
    const file = await s.techAgent.get(res.body.attachment.url).buffer(true)
    const thumb = await s.techAgent.get(res.body.attachment.thumbnailUrl).buffer(true)
    expect(Buffer.compare(file.body, PNG)).toBe(0)
    expect(thumb.headers['content-type']).toBe('image/webp')
    const photo = await set(s.techAgent, run.id, 'attendanceSheet', { value: [res.body.attachment.id] })
    expect(photo.status).toBe(200)

    const text = await s.techAgent.post(`/api/runs/${run.id}/attachments`).field('stepId', 'training-record').attach('file', Buffer.from('hello'), { filename: 'a.png', contentType: 'image/png' })
    const noStep = await s.techAgent.post(`/api/runs/${run.id}/attachments`).field('stepId', 'nope').attach('file', PNG, { filename: 'a.png', contentType: 'image/png' })
    const huge = await s.techAgent.post(`/api/runs/${run.id}/attachments`).field('stepId', 'training-record').attach('file', Buffer.concat([PNG, Buffer.alloc(1.1 * 1024 * 1024)]), { filename: 'b.png', contentType: 'image/png' })
    expect([text.status, noStep.status, huge.status]).toEqual([415, 400, 413])
    const contractor = await signedInAgent(ctx.app, s.contractor)
    expect((await contractor.get(res.body.attachment.url)).status).toBe(404)
  })

  it('when the run is read with its audit trail, then every change is there in order', async () => {
    const s = await scenario()
    const run = await startRun(s)
    await set(s.techAgent, run.id, 'oilPressureRunning', { value: 30, unit: 'psid' }).expect(200)
    await set(s.techAgent, run.id, 'oilPressureRunning', { value: 36, unit: 'psid' }, 1).expect(200)
    const events = (await s.techAgent.get(`/api/runs/${run.id}/audit`)).body.events
    expect(events.map((e: { action: string }) => e.action)).toEqual(['run.start', 'reading.set', 'reading.set'])
    expect(events[2].before.entry).toEqual({ value: 30, unit: 'psid' })
    expect(events[2].after.entry).toEqual({ value: 36, unit: 'psid' })
  })
})
