import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest'
import { STARTER_LIBRARY } from '@shared/library'
import { ensureStarterLibrary } from '../../server/services/starter-library'
import { asOwner, createTestContext, resetDatabase, type TestContext } from '../helpers/context'
import { readyRun as readyRunIn, sign } from '../helpers/runs'

// Dispositions, the pre-work safety stop and acceptance with exceptions (docs/REFERENCES.md §Record keeping).
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

const readyRun = () => readyRunIn(ctx)
const change = (body: Record<string, unknown>, baseVersion = 0) => ({ changeId: randomUUID(), baseVersion, ...body })

describe('dispositions on readings and steps', () => {
  it('when a disposition lacks its reason, reference, witness or due date, then 400 names the field and nothing is kept', async () => {
    const s = await readyRun()
    const url = `/api/runs/${s.run.id}/steps/trip-low-oil`
    const cases: Array<[Record<string, unknown>, string]> = [
      [{ kind: 'not_applicable' }, 'disposition.reason'],
      [{ kind: 'by_others', by: 'Field service engineer' }, 'disposition.reference'],
      [{ kind: 'by_others', by: 'Field service engineer', reference: 'FS-1' }, 'disposition.witnessed'],
      [{ kind: 'verified_earlier' }, 'disposition.reportNumber'],
      [{ kind: 'deferred', reason: 'Seasonal load' }, 'disposition.dueDate'],
      [{ kind: 'deferred', reason: 'Seasonal load', dueDate: 'next spring' }, 'disposition.dueDate'],
      [{ kind: 'not_done' }, 'disposition.reason'],
      [{ kind: 'later', reason: 'x' }, 'disposition.kind'],
    ]
    for (const [disposition, field] of cases) {
      const res = await s.techAgent.put(url).send(change({ disposition }))
      expect(res.status, JSON.stringify(disposition)).toBe(400)
      expect(Object.keys(res.body.error.fields), JSON.stringify(disposition)).toContain(field)
    }
    const run = (await s.techAgent.get(`/api/runs/${s.run.id}`)).body.run
    // The step as readyRun left it: the older not-applicable flag, read as the not-applicable disposition.
    expect(run.steps['trip-low-oil'].disposition).toMatchObject({ kind: 'not_applicable', reason: 'Covered by the factory test record' })
  })

  it('when a step is deferred or done by others, then the run counts it so and the review names the work by others and the exception', async () => {
    const s = await readyRun()
    const deferred = await s.techAgent.put(`/api/runs/${s.run.id}/steps/trip-high-condenser`).send(change({ disposition: { kind: 'deferred', reason: 'Winter tower water', dueDate: '2027-05-01' } }, 1))
    expect(deferred.status).toBe(200)
    expect(deferred.body.step.disposition).toEqual({ kind: 'deferred', reason: 'Winter tower water', by: null, reference: null, witnessed: null, reportNumber: null, dueDate: '2027-05-01' })
    const others = await s.techAgent
      .put(`/api/runs/${s.run.id}/steps/prelube`)
      .send(change({ disposition: { kind: 'by_others', by: 'Field service engineer of the manufacturer', reference: 'FS-204', witnessed: true } }, 1))
    expect(others.status).toBe(200)
    const review = (await s.techAgent.get(`/api/runs/${s.run.id}/review`)).body.review
    expect(review.counts.deferred).toBe(4) // the trip, its setting, its trip value and the computed deviation
    expect(review.counts.byOthers).toBe(3)
    expect(review.byOthers).toEqual([{ by: 'Field service engineer of the manufacturer', reference: 'FS-204', witnessed: true, where: ['Pre-lubrication and oil-pressure proving'], checks: 3 }])
    expect(review.exceptions).toEqual([expect.objectContaining({ id: 'step:trip-high-condenser', kind: 'deferred', dueDate: '2027-05-01' })])
    expect(review.canSign).toBe(true)
  })

  it('when a pre-work safety item is set aside or answered No, then it is refused or the run stops until it is Yes', async () => {
    const s = await readyRun()
    const aside = await s.techAgent.put(`/api/runs/${s.run.id}/readings/safetyBriefing`).send(change({ disposition: { kind: 'not_applicable', reason: 'x' } }, 1))
    expect(aside.status).toBe(400)
    expect(aside.body.error.fields.disposition).toMatch(/cannot be set aside/)
    const stepAside = await s.techAgent.put(`/api/runs/${s.run.id}/steps/prestart-safety`).send(change({ disposition: { kind: 'not_applicable', reason: 'x' } }))
    expect(stepAside.status).toBe(400)

    const no = await s.techAgent.put(`/api/runs/${s.run.id}/readings/safetyBriefing`).send(change({ entry: { value: false } }, 1))
    expect(no.status).toBe(200)
    expect(no.body.progress.fail).toBe(0)
    const elsewhere = await s.techAgent.put(`/api/runs/${s.run.id}/readings/oilTempRunning`).send(change({ entry: { value: 126, unit: 'degF' } }, 1))
    expect(elsewhere.status).toBe(409)
    expect(elsewhere.body.error.code).toBe('run_stopped')
    expect(elsewhere.body.error.message).toMatch(/^Do not proceed until the permits/)
    const review = (await s.techAgent.get(`/api/runs/${s.run.id}/review`)).body.review
    expect(review.canSign).toBe(false)
    expect(review.blockers[0]).toMatch(/^Do not proceed until/)

    expect((await s.techAgent.put(`/api/runs/${s.run.id}/readings/safetyBriefing`).send(change({ entry: { value: true } }, 2))).status).toBe(200)
    expect((await s.techAgent.put(`/api/runs/${s.run.id}/readings/oilTempRunning`).send(change({ entry: { value: 126, unit: 'degF' } }, 1))).status).toBe(200)
  })
})

describe('accepted with exceptions', () => {
  it('when a run has exceptions, then acceptance needs each one acknowledged, keeps the list on the signature, and a critical finding blocks it', async () => {
    const s = await readyRun()
    // A fail accepted on a justification alone, and a critical finding.
    expect((await s.techAgent.put(`/api/runs/${s.run.id}/readings/oilPressureRunning`).send(change({ entry: { value: 18, unit: 'psid' }, justification: 'Gauge fault; controller reads 36 psid' }, 1))).status).toBe(200)
    const critical = await s.techAgent.post(`/api/runs/${s.run.id}/findings`).send({ stepId: 'oil-running', severity: 'critical', description: 'Oil heater wiring burnt at the terminal' })
    expect(critical.status).toBe(201)
    expect((await sign(s.techAgent, s.run.id, 'performed_by')).status).toBe(201)

    const review = (await s.repAgent.get(`/api/runs/${s.run.id}/review`)).body.review
    expect(review.exceptions.map((e: { id: string }) => e.id)).toEqual(['field:oilPressureRunning', `finding:${critical.body.finding.id}`])
    expect(review.blockingFindings).toEqual([critical.body.finding.id])
    const blocked = await sign(s.repAgent, s.run.id, 'accepted_by')
    expect(blocked.status).toBe(409)
    expect(blocked.body.error.code).toBe('critical_findings_open')
  })

  it('when the acceptor leaves an exception unacknowledged or names one the run does not have, then 409 lists them; acknowledging all accepts', async () => {
    const s = await readyRun()
    expect((await s.techAgent.put(`/api/runs/${s.run.id}/readings/oilPressureRunning`).send(change({ entry: { value: 18, unit: 'psid' }, justification: 'Gauge fault; controller reads 36 psid' }, 1))).status).toBe(200)
    const minor = await s.techAgent.post(`/api/runs/${s.run.id}/findings`).send({ stepId: 'oil-running', severity: 'major', description: 'Oil sight glass cracked' })
    expect((await sign(s.techAgent, s.run.id, 'performed_by')).status).toBe(201)

    const none = await sign(s.repAgent, s.run.id, 'accepted_by', { acknowledgedExceptions: [] })
    expect(none.status).toBe(409)
    expect(none.body.error).toMatchObject({ code: 'exceptions_not_acknowledged', fields: { acknowledgedExceptions: '2 exceptions not acknowledged' } })
    expect(none.body.exceptions).toHaveLength(2)
    const wrong = await sign(s.repAgent, s.run.id, 'accepted_by', { acknowledgedExceptions: ['field:oilPressureRunning', `finding:${minor.body.finding.id}`, 'field:nothing'] })
    expect(wrong.status).toBe(409)
    const bad = await sign(s.repAgent, s.run.id, 'accepted_by', { acknowledgedExceptions: 'all' })
    expect(bad.status).toBe(400)
    expect(Object.keys(bad.body.error.fields)).toContain('acknowledgedExceptions')

    const ok = await sign(s.repAgent, s.run.id, 'accepted_by')
    expect(ok.status).toBe(201)
    expect(ok.body.signature.acknowledgedExceptions).toEqual(['field:oilPressureRunning', `finding:${minor.body.finding.id}`])
    const [row] = await ctx.db.query(`SELECT acknowledged_exceptions FROM signature WHERE id = $1`, [ok.body.signature.id])
    expect(row.acknowledged_exceptions).toEqual(['field:oilPressureRunning', `finding:${minor.body.finding.id}`])
  })
})

describe('starter templates are revised as new versions', () => {
  it('when the library has a newer revision, then the firm gets it as the next published version; a run on the old version keeps it', async () => {
    const s = await readyRun()
    const chiller = STARTER_LIBRARY.find((t) => t.key === 'centrifugal-chiller-startup')!
    // As if version 1 had come from the previous revision of the library.
    await asOwner(async (owner) => {
      await owner.query(`ALTER TABLE template_version DISABLE TRIGGER template_version_frozen`)
      await owner.query(`UPDATE template_version SET starter_revision = $2 WHERE template_id = $1`, [s.template.id, chiller.revision - 1])
      await owner.query(`ALTER TABLE template_version ENABLE TRIGGER template_version_frozen`)
    }, ctx.db)
    expect(await ensureStarterLibrary(ctx.db)).toBe(1)
    expect(await ensureStarterLibrary(ctx.db)).toBe(0)
    const versions: { number: number; status: string; starter_revision: number; changelog: string }[] = await ctx.db.query(
      `SELECT number, status, starter_revision, changelog FROM template_version WHERE template_id = $1 ORDER BY number`,
      [s.template.id],
    )
    expect(versions.map((v) => [v.number, v.status, v.starter_revision])).toEqual([
      [1, 'published', chiller.revision - 1],
      [2, 'published', chiller.revision],
    ])
    expect(versions[1].changelog).toBe(chiller.revisionNote)
    // The run pinned to version 1 keeps working on it.
    const run = (await s.techAgent.get(`/api/runs/${s.run.id}`)).body.run
    expect(run.templateVersionNumber).toBe(1)
    expect((await s.techAgent.put(`/api/runs/${s.run.id}/readings/oilTempRunning`).send(change({ entry: { value: 127, unit: 'degF' } }, 1))).status).toBe(200)
    // A new run starts on version 2.
    const next = await s.techAgent.post(`/api/equipment/${s.equipment.id}/runs`).send({ templateId: s.template.id })
    expect(next.status).toBe(201)
    expect(next.body.run.templateVersionNumber).toBe(2)
  })
})
