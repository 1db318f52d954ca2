import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest'
import { designPoint } from '../shared/fixtures'
import { createTestContext, resetDatabase, type TestContext } from '../helpers/context'
import { readyRun, sign } from '../helpers/runs'

let ctx: TestContext
beforeAll(async () => {
  ctx = await createTestContext()
})
afterAll(() => ctx.close())
beforeEach(() => resetDatabase(ctx.db))

// The ready run holds a running oil pressure of 36 psid against a 35 psid setpoint: a pass. The starter chiller
// template fails a reading more than 15 % below the setpoint, so a 50 psid setpoint makes the same 36 psid a fail.
const raisedSetpoint = { ...designPoint, oilPressureSetpoint: { value: 50, unit: 'psid' } }

const verdictOf = async (runId: string, fieldId: string) =>
  (await ctx.db.query(`SELECT verdict FROM reading WHERE run_id = $1 AND field_id = $2`, [runId, fieldId]))[0].verdict as string
const auditOf = (action: string) => ctx.db.query(`SELECT actor_id, entity_id, before, after FROM audit_event WHERE action = $1 ORDER BY id`, [action])
const performerSignatures = (runId: string) =>
  ctx.db.query(`SELECT voided, void_reason FROM signature WHERE run_id = $1 AND meaning = 'performed_by' ORDER BY signed_at`, [runId])

describe('an equipment edit and the runs it reaches', () => {
  it('when the design point of equipment with a run in progress changes, then the run is re-judged at once and audited', async () => {
    const s = await readyRun(ctx)
    expect(await verdictOf(s.run.id, 'oilPressureRunning')).toBe('pass')

    const res = await s.adminAgent.patch(`/api/equipment/${s.equipment.id}`).send({ designPoint: raisedSetpoint, version: 1 })

    expect(res.status).toBe(200)
    expect(res.body.runs.voided).toEqual([])
    expect(res.body.runs.rejudged).toEqual([
      { runId: s.run.id, state: 'in_progress', equipmentTag: 'CH-7', checklist: `${s.template.name} v1`, performer: null, signedAt: null },
    ])
    expect(await verdictOf(s.run.id, 'oilPressureRunning')).toBe('fail')
    const run = (await s.techAgent.get(`/api/runs/${s.run.id}`)).body.run
    expect(run.state).toBe('in_progress')
    expect(run.readings.oilPressureRunning.evaluation.verdict).toBe('fail')
    const [event] = await auditOf('run.rejudged')
    expect(event).toMatchObject({ actor_id: s.admin.id, entity_id: s.run.id })
    expect(event.after).toMatchObject({ cause: 'equipment.update', changed: ['designPoint'], verdictChanges: [{ fieldId: 'oilPressureRunning', before: 'pass', after: 'fail' }] })
    expect(event.before.designPoint.oilPressureSetpoint.value).toBeCloseTo(241_317, -1) // 35 psi × 6.894 757 kPa/psi (NIST SP 811 App. B.8), in Pa
  })

  it('when a submitted run would lose its signature and the admin has not confirmed, then 409 names the run and nothing changes', async () => {
    const s = await readyRun(ctx)
    const signed = await sign(s.techAgent, s.run.id, 'performed_by')
    expect(signed.status).toBe(201)

    const res = await s.adminAgent.patch(`/api/equipment/${s.equipment.id}`).send({ designPoint: raisedSetpoint, version: 1 })

    expect(res.status).toBe(409)
    expect(res.body.error.code).toBe('affects_signed_runs')
    expect(res.body.error.message).toMatch(/^Changing the design point of CH-7 voids the performer's signature on 1 submitted run \(CH-7 .+ v1, signed by Ada Tech at \d{4}-\d\d-\d\d \d\d:\d\d UTC\)/)
    expect(res.body.error.fields).toEqual({ confirmVoid: 'Confirm to void 1 performer signature' })
    expect(res.body.runs).toEqual([
      { runId: s.run.id, state: 'submitted', equipmentTag: 'CH-7', checklist: `${s.template.name} v1`, performer: 'Ada Tech', signedAt: signed.body.signature.signedAtUtc },
    ])
    const item = (await s.adminAgent.get(`/api/equipment/${s.equipment.id}`)).body.equipment
    expect(item.version).toBe(1)
    expect(item.designPoint).toEqual(s.equipment.designPoint)
    expect((await s.techAgent.get(`/api/runs/${s.run.id}`)).body.run.state).toBe('submitted')
    expect(await performerSignatures(s.run.id)).toEqual([{ voided: false, void_reason: null }])
    expect(await auditOf('equipment.update')).toEqual([])
  })

  it('when the admin confirms, then the signature is voided with the reason, the run goes back to its technician re-judged, and they are mailed', async () => {
    const s = await readyRun(ctx)
    await sign(s.techAgent, s.run.id, 'performed_by').then((r) => expect(r.status).toBe(201))

    const res = await s.adminAgent.patch(`/api/equipment/${s.equipment.id}`).send({ designPoint: raisedSetpoint, version: 1, confirmVoid: true })

    expect(res.status).toBe(200)
    expect(res.body.equipment.version).toBe(2)
    expect(res.body.runs.voided).toEqual([expect.objectContaining({ runId: s.run.id, state: 'returned', performer: 'Ada Tech' })])
    const reason = `Voided: the design point of CH-7 was changed by ${s.admin.displayName} after signing`
    expect(await performerSignatures(s.run.id)).toEqual([{ voided: true, void_reason: reason }])
    const run = (await s.techAgent.get(`/api/runs/${s.run.id}`)).body.run
    expect(run.state).toBe('returned')
    expect(run.readings.oilPressureRunning.evaluation.verdict).toBe('fail')
    expect(run.signatures).toEqual([expect.objectContaining({ meaning: 'performed_by', voided: true, voidReason: reason })])
    const [voided] = await auditOf('run.signature_voided')
    expect(voided.after).toMatchObject({ state: 'returned', reason, cause: 'equipment.update', changed: ['designPoint'] })
    expect(await auditOf('run.rejudged')).toHaveLength(1)
    const mail = await ctx.db.query(`SELECT kind, run_id, to_addresses, subject, body_text FROM outbound_mail WHERE kind = 'run_returned'`)
    expect(mail).toEqual([expect.objectContaining({ run_id: s.run.id, to_addresses: ['ada@firm.test'] })])
    expect(mail[0].subject).toBe('Your signature on the start-up of CH-7 was voided: the design point of CH-7 changed')
    expect(mail[0].body_text).toContain(reason)
    expect(mail[0].body_text).toContain(`${ctx.config.PUBLIC_URL}/runs/${s.run.id}`)

    // Back with the technician: the new fail needs handling before the run can be signed again, and then it can.
    const review = (await s.techAgent.get(`/api/runs/${s.run.id}/review`)).body.review
    expect(review.canSign).toBe(false)
    const justified = await s.techAgent
      .put(`/api/runs/${s.run.id}/readings/oilPressureRunning`)
      .send({ changeId: randomUUID(), baseVersion: run.readings.oilPressureRunning.version, entry: run.readings.oilPressureRunning.entry, justification: 'Setpoint raised by the manufacturer; regulator to be reset at the next visit' })
    expect(justified.status).toBe(200)
    const again = await sign(s.techAgent, s.run.id, 'performed_by')
    expect(again.status).toBe(201)
  })

  it('when only the notes change, then no run is reached and a submitted run keeps its signature', async () => {
    const s = await readyRun(ctx)
    await sign(s.techAgent, s.run.id, 'performed_by').then((r) => expect(r.status).toBe(201))

    const res = await s.adminAgent.patch(`/api/equipment/${s.equipment.id}`).send({ notes: 'Isolation valves tagged', version: 1 })

    expect(res.status).toBe(200)
    expect(res.body.runs).toEqual({ rejudged: [], voided: [] })
    expect((await s.techAgent.get(`/api/runs/${s.run.id}`)).body.run.state).toBe('submitted')
    expect(await performerSignatures(s.run.id)).toEqual([{ voided: false, void_reason: null }])
  })

  it('when the tag of a submitted run’s equipment changes on confirmation, then the reason names the former and the new tag', async () => {
    const s = await readyRun(ctx)
    await sign(s.techAgent, s.run.id, 'performed_by').then((r) => expect(r.status).toBe(201))

    const refused = await s.adminAgent.patch(`/api/equipment/${s.equipment.id}`).send({ tag: 'CH-7A', serialNumber: 'TW-7A', version: 1 })
    const res = await s.adminAgent.patch(`/api/equipment/${s.equipment.id}`).send({ tag: 'CH-7A', serialNumber: 'TW-7A', version: 1, confirmVoid: true })

    expect(refused.status).toBe(409)
    expect(refused.body.error.message).toMatch(/^Changing the tag and serial number of CH-7 voids/)
    expect(res.status).toBe(200)
    expect(await performerSignatures(s.run.id)).toEqual([
      { voided: true, void_reason: `Voided: the tag and serial number of CH-7 were changed by ${s.admin.displayName} after signing (the tag is now CH-7A)` },
    ])
  })

  it('when the run was accepted, then an edit of its equipment leaves the run, its verdicts and its signatures as they were, and the item names the tag its report printed', async () => {
    const s = await readyRun(ctx)
    await sign(s.techAgent, s.run.id, 'performed_by').then((r) => expect(r.status).toBe(201))
    await sign(s.repAgent, s.run.id, 'accepted_by').then((r) => expect(r.status).toBe(201))
    const before = await ctx.db.query(`SELECT field_id, verdict, evaluation FROM reading WHERE run_id = $1 ORDER BY field_id`, [s.run.id])

    const res = await s.adminAgent.patch(`/api/equipment/${s.equipment.id}`).send({ designPoint: raisedSetpoint, tag: 'CH-7A', version: 1 })

    expect(res.status).toBe(200)
    expect(res.body.runs).toEqual({ rejudged: [], voided: [] })
    expect(await ctx.db.query(`SELECT field_id, verdict, evaluation FROM reading WHERE run_id = $1 ORDER BY field_id`, [s.run.id])).toEqual(before)
    expect(await ctx.db.query(`SELECT state FROM run WHERE id = $1`, [s.run.id])).toEqual([{ state: 'accepted' }])
    expect(await ctx.db.query(`SELECT meaning, voided FROM signature WHERE run_id = $1 ORDER BY signed_at`, [s.run.id])).toEqual([
      { meaning: 'performed_by', voided: false },
      { meaning: 'accepted_by', voided: false },
    ])
    expect(await auditOf('run.rejudged')).toEqual([])
    const item = (await s.adminAgent.get(`/api/equipment/${s.equipment.id}`)).body.equipment
    expect(item).toMatchObject({ tag: 'CH-7A', formerTags: ['CH-7'] })
  })
})

describe('a project edit and the runs it reaches', () => {
  it('when the unit system of a project with a run in progress changes, then the run is re-judged in the new units', async () => {
    const s = await readyRun(ctx)

    const res = await s.adminAgent.patch(`/api/projects/${s.project.id}`).send({ unitSystem: 'SI', version: 1 })

    expect(res.status).toBe(200)
    expect(res.body.runs.rejudged).toEqual([expect.objectContaining({ runId: s.run.id, state: 'in_progress' })])
    const [event] = await auditOf('run.rejudged')
    expect(event.before).toMatchObject({ unitSystem: 'IP', state: 'in_progress' })
    expect(event.after).toMatchObject({ unitSystem: 'SI', cause: 'project.update', changed: ['unitSystem'], verdictChanges: [] })
    expect(event.after.evaluationsRewritten).toBeGreaterThan(0)
  })

  it('when the time zone of a project with a submitted run changes, then it needs confirmation and then voids the signature with the reason', async () => {
    const s = await readyRun(ctx)
    await sign(s.techAgent, s.run.id, 'performed_by').then((r) => expect(r.status).toBe(201))

    const refused = await s.adminAgent.patch(`/api/projects/${s.project.id}`).send({ timeZone: 'America/New_York', version: 1 })
    const stillThere = (await s.adminAgent.get(`/api/projects/${s.project.id}`)).body.project
    const res = await s.adminAgent.patch(`/api/projects/${s.project.id}`).send({ timeZone: 'America/New_York', version: 1, confirmVoid: true })

    expect(refused.status).toBe(409)
    expect(refused.body.error.code).toBe('affects_signed_runs')
    expect(refused.body.runs).toEqual([expect.objectContaining({ runId: s.run.id, equipmentTag: 'CH-7', performer: 'Ada Tech' })])
    expect(stillThere).toMatchObject({ timeZone: 'America/Chicago', version: 1 })
    expect(res.status).toBe(200)
    expect(res.body.project).toMatchObject({ timeZone: 'America/New_York', version: 2 })
    expect(res.body.runs.voided).toEqual([expect.objectContaining({ runId: s.run.id, state: 'returned' })])
    expect(await performerSignatures(s.run.id)).toEqual([
      { voided: true, void_reason: `Voided: the time zone of project ${s.project.code} was changed by ${s.admin.displayName} after signing` },
    ])
    expect((await s.techAgent.get(`/api/runs/${s.run.id}`)).body.run.state).toBe('returned')
  })

  it('when only the distribution list changes, then a submitted run is not reached', async () => {
    const s = await readyRun(ctx)
    await sign(s.techAgent, s.run.id, 'performed_by').then((r) => expect(r.status).toBe(201))
    const res = await s.adminAgent.patch(`/api/projects/${s.project.id}`).send({ distributionList: ['records@owner.test', 'fm@owner.test'], version: 1 })
    expect(res.status).toBe(200)
    expect(res.body.runs).toEqual({ rejudged: [], voided: [] })
    expect(await performerSignatures(s.run.id)).toEqual([{ voided: false, void_reason: null }])
  })

  it('when a project with equipment and a run is deleted, then 409 says what it holds and nothing is deleted', async () => {
    const s = await readyRun(ctx)
    const res = await s.adminAgent.delete(`/api/projects/${s.project.id}`)
    expect(res.status).toBe(409)
    expect(res.body.error).toEqual({
      code: 'project_in_use',
      message: `Project ${s.project.code} has 1 equipment item and 1 start-up run, which are kept as records; close the project instead. Nothing was deleted.`,
    })
    expect((await s.adminAgent.get(`/api/projects/${s.project.id}`)).status).toBe(200)
    expect(await auditOf('project.delete')).toEqual([])
  })
})
