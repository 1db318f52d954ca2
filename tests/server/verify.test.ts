import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest'
import request from 'supertest'
import { randomUUID } from 'node:crypto'
import { PDFDocument } from 'pdf-lib'
import type { ReportRenderer, ReportService } from '../../server/services/report.service'
import { Report } from '../../server/entities'
import { renderReportHtml } from '../../server/reports/render'
import { buildReportView } from '../../server/reports/view-model'
import type { RunReview } from '@shared/types/run'
import { createTestContext, resetDatabase, type TestContext } from '../helpers/context'
import { fillRetest as fill, issueReport, makeSignable, readyRun, sign } from '../helpers/runs'
import { binary } from '../helpers/zip'

let ctx: TestContext
const services = () => ctx.services

beforeAll(async () => {
  ctx = await createTestContext({ CERT_DIR: `/tmp/startproof-verify-certs-${process.pid}` })
})
afterAll(async () => {
  await services().renderer.close()
  await ctx.close()
})
beforeEach(() => resetDatabase(ctx.db))

type Scenario = Awaited<ReturnType<typeof readyRun>>

async function acceptAndIssue(s: Scenario, runId: string): Promise<{ pdf: Buffer; reportNumber: string }> {
  const reportNumber = await issueReport(s, runId, services().reports)
  const res = await s.repAgent.get(`/api/runs/${runId}/report.pdf`).buffer(true).parse(binary)
  return { pdf: res.body as Buffer, reportNumber }
}

const yes = { value: true }
const POWER = ['supplyMatchesNameplate', 'phaseRotation', 'terminationsChecked', 'controlPowerHealthy']
const change = (body: Record<string, unknown>, baseVersion = 0) => ({ changeId: randomUUID(), baseVersion, ...body })

const check = (file: Buffer, name = 'report.pdf') => request(ctx.app).post('/api/verify').attach('file', file, { filename: name, contentType: 'application/pdf' })

describe('/api/verify (public)', () => {
  it('when a re-test is rendered before the report it supersedes, then the older one is still the superseded one', async () => {
    const s = await readyRun(ctx)
    expect((await sign(s.techAgent, s.run.id, 'performed_by')).status).toBe(201)
    expect((await sign(s.repAgent, s.run.id, 'accepted_by')).status).toBe(201)
    const older = (await s.repAgent.get(`/api/runs/${s.run.id}/report`)).body.report
    const retest = (await s.techAgent.post(`/api/equipment/${s.equipment.id}/runs`).send({ templateId: s.template.id }).expect(201)).body.run
    await makeSignable(s.techAgent, retest)
    expect((await sign(s.techAgent, retest.id, 'performed_by')).status).toBe(201)
    expect((await sign(s.repAgent, retest.id, 'accepted_by')).status).toBe(201)
    const newer = (await s.repAgent.get(`/api/runs/${retest.id}/report`)).body.report
    // The queue renders the re-test first (as after a restart with a backlog).
    await services().reports.process(newer.id)
    await services().reports.process(older.id)
    const answerOlder = (await request(ctx.app).get(`/api/verify/${older.reportNumber}`).expect(200)).body.answer
    expect(answerOlder).toMatchObject({ outcome: 'genuine_superseded', supersededBy: { reportNumber: newer.reportNumber } })
    expect((await request(ctx.app).get(`/api/verify/${newer.reportNumber}`).expect(200)).body.answer.outcome).toBe('genuine_current')
    const archive = (await s.repAgent.get('/api/archive').expect(200)).body.items as { reportNumber: string; supersededBy: string | null }[]
    expect(archive.find((i) => i.reportNumber === older.reportNumber)?.supersededBy).toBe(newer.reportNumber)
    expect(archive.find((i) => i.reportNumber === newer.reportNumber)?.supersededBy).toBeNull()
  }, 120_000)

  it('when the archived PDF is uploaded, then it is genuine and current; one flipped byte makes it altered; a re-test supersedes it', async () => {
    const s = await readyRun(ctx)
    const first = await acceptAndIssue(s, s.run.id)

    const genuine = await check(first.pdf)
    expect(genuine.status).toBe(200)
    expect(genuine.body.answer).toMatchObject({ outcome: 'genuine_current', report: { reportNumber: first.reportNumber, equipmentTag: 'CH-7', verdict: 'pass' } })
    // The public answer holds only the report number, tag, project, acceptance date and verdict.
    expect(Object.keys(genuine.body.answer.report).sort()).toEqual(['acceptedAt', 'acceptedAtLocal', 'equipmentTag', 'projectName', 'reportNumber', 'verdict'])
    expect(genuine.body.answer.fileChecked).toBe(true)

    const altered = Buffer.from(first.pdf)
    const at = altered.indexOf('/Type /Page') + 3
    altered[at] ^= 0x01
    const tampered = await check(altered)
    expect(tampered.body.answer.outcome).toBe('altered')
    expect(tampered.body.answer.reasons.join(' ')).toMatch(/changed after sealing|differs from the archived/)

    const retest = (await s.techAgent.post(`/api/equipment/${s.equipment.id}/runs`).send({ templateId: s.template.id }).expect(201)).body.run
    await makeSignable(s.techAgent, retest)
    const second = await acceptAndIssue(s, retest.id)
    const old = await check(first.pdf)
    expect(old.body.answer).toMatchObject({ outcome: 'genuine_superseded', supersededBy: { reportNumber: second.reportNumber } })
    const byNumber = await request(ctx.app).get(`/api/verify/${second.reportNumber}`)
    expect(byNumber.body.answer).toMatchObject({ outcome: 'genuine_current', report: { reportNumber: second.reportNumber } })
  }, 120_000)

  it('when re-tests perform only some checks again, then Verify, the archive, the review before signing and the cover say which and how many', async () => {
    const s = await readyRun(ctx)
    // The baseline performs 6 checks of the machine: the four power checks and the two running oil readings (the two
    // pre-work safety items are answered on every visit and neither supersede nor are superseded).
    await s.techAgent.put(`/api/runs/${s.run.id}/steps/power`).send(change({ notApplicable: false, disposition: null }, 1)).expect(200)
    for (const f of POWER) await s.techAgent.put(`/api/runs/${s.run.id}/readings/${f}`).send(change({ entry: yes })).expect(200)
    const baseline = await issueReport(s, s.run.id, services().reports)

    // A re-test that reads the oil pressure again and carries the rest over from the baseline.
    const first = (await s.techAgent.post(`/api/equipment/${s.equipment.id}/runs`).send({ templateId: s.template.id }).expect(201)).body.run
    await fill(s.techAgent, first, { read: { oilPressureRunning: { value: 37, unit: 'psid' } }, carrySteps: { power: baseline }, carryFields: { oilTempRunning: baseline } })
    const before = (await s.techAgent.get(`/api/runs/${first.id}/review`).expect(200)).body.review as RunReview
    const checks = before.counts.checks - 2 // less the two pre-work safety items
    expect(before.supersession).toMatchObject({ performed: 1, fewPerformed: true, earlier: 1, supersedes: [{ reportNumber: baseline, current: 6, performed: 6, superseded: 1 }] })
    expect(before.supersession.lines).toEqual([
      `This run performs only 1 of its ${checks} checks; the other ${checks - 1} are carried over or set aside.`,
      `Accepting this run supersedes 1 of 6 checks of ${baseline}; the other 5 stay current there.`,
      `5 checks carried over from ${baseline}.`,
    ])
    expect((await sign(s.techAgent, first.id, 'performed_by')).status).toBe(201)
    // The owner's representative is told the same before accepting.
    expect(((await s.repAgent.get(`/api/runs/${first.id}/review`).expect(200)).body.review as RunReview).supersession.lines).toEqual(before.supersession.lines)
    expect((await sign(s.repAgent, first.id, 'accepted_by')).status).toBe(201)
    const pending = (await s.repAgent.get(`/api/runs/${first.id}/report`)).body.report
    await services().reports.process(pending.id)
    const retest = pending.reportNumber as string

    const old = (await request(ctx.app).get(`/api/verify/${baseline}`).expect(200)).body.answer
    expect(old).toMatchObject({
      outcome: 'genuine_partly_superseded',
      headline: `${baseline} is an issued report; partly superseded: 1 of 6 checks re-tested in ${retest}`,
      supersededBy: null,
      supersession: { state: 'partly', performed: 6, retested: 1, by: [{ reportNumber: retest, checks: 1 }], words: `Partly superseded: 1 of 6 checks re-tested in ${retest}` },
    })
    expect(old.reasons).toContain(`Later start-ups of CH-7 with the same checklist performed 1 of its 6 checks again (${retest}: 1). For the other 5 it is still the current record.`)
    const newer = (await request(ctx.app).get(`/api/verify/${retest}`).expect(200)).body.answer
    expect(newer).toMatchObject({ outcome: 'genuine_current', supersession: { state: 'current', performed: 1 } })
    expect(newer.reasons).toContain(`Re-test: performed 1 of its ${checks} checks. 5 checks carried over from ${baseline}.`)
    // The uploaded baseline file gets the same answer.
    const file = await s.repAgent.get(`/api/runs/${s.run.id}/report.pdf`).buffer(true).parse(binary)
    expect((await check(file.body as Buffer)).body.answer).toMatchObject({ outcome: 'genuine_partly_superseded', headline: `Genuine report ${baseline}; partly superseded: 1 of 6 checks re-tested in ${retest}` })

    const archive = (await s.repAgent.get('/api/archive').expect(200)).body.items as { reportNumber: string; supersededBy: string | null; supersession: { state: string; words: string; retest: string | null } }[]
    expect(archive.find((i) => i.reportNumber === baseline)).toMatchObject({ supersededBy: null, supersession: { state: 'partly', words: `Partly superseded: 1 of 6 checks re-tested in ${retest}`, retest: null } })
    expect(archive.find((i) => i.reportNumber === retest)).toMatchObject({ supersededBy: null, supersession: { state: 'current', retest: `Re-test: performed 1 of its ${checks} checks. 5 checks carried over from ${baseline}.` } })

    // The re-test's cover says what it superseded, as kept with its report at acceptance.
    const row = await ctx.db.getRepository(Report).findOneByOrFail({ reportNumber: retest })
    const cover = `This report performs only 1 of its ${checks} checks; the other ${checks - 1} are carried over or set aside. This report supersedes 1 of 6 checks of ${baseline}; the other 5 stay current there. 5 checks carried over from ${baseline}.`
    expect(row.supersedes?.words).toBe(cover)
    const input = await services().reports.buildInput(row)
    expect(buildReportView(input).supersedes).toBe(cover)
    expect(renderReportHtml(input)).toContain(`<h3>Re-test</h3><p>${cover}</p>`)
    const baselineInput = await services().reports.buildInput(await ctx.db.getRepository(Report).findOneByOrFail({ reportNumber: baseline }))
    expect(buildReportView(baselineInput).supersedes).toBeNull()
    expect(renderReportHtml(baselineInput)).not.toContain('<h3>Re-test</h3>')

    // A second re-test performs the power checks again and carries the oil step over from the first re-test, which had
    // carried the oil temperature over from the baseline: that check is cited back to the baseline.
    const second = (await s.techAgent.post(`/api/equipment/${s.equipment.id}/runs`).send({ templateId: s.template.id }).expect(201)).body.run
    await fill(s.techAgent, second, { read: Object.fromEntries(POWER.map((f) => [f, yes])), carrySteps: { 'oil-running': retest } })
    const preview = ((await s.techAgent.get(`/api/runs/${second.id}/review`).expect(200)).body.review as RunReview).supersession
    expect(preview.lines).toEqual([
      `This run performs only 4 of its ${checks} checks; the other ${checks - 4} are carried over or set aside.`,
      `Accepting this run supersedes 4 of the 5 checks still current in ${baseline}; the other 1 stays current there.`,
      `1 check carried over from ${baseline} (cited as ${retest}, which carried it over in turn).`,
      `1 check carried over from ${retest}.`,
    ])
    const third = await issueReport(s, second.id, services().reports)
    expect((await request(ctx.app).get(`/api/verify/${baseline}`).expect(200)).body.answer.headline).toBe(`${baseline} is an issued report; partly superseded: 5 of 6 checks re-tested in ${retest} and ${third}`)
    // The second re-test repeats the power checks, not the first re-test's oil pressure: that stays current there.
    expect((await request(ctx.app).get(`/api/verify/${retest}`).expect(200)).body.answer.supersession.words).toBe('Current')
    // What was printed on the first re-test's cover does not change.
    expect((await ctx.db.getRepository(Report).findOneByOrFail({ reportNumber: retest })).supersedes?.words).toBe(cover)
  }, 180_000)

  it('when the file is some other PDF, not a PDF, empty or the number is unknown, then the answer says so, never a 500', async () => {
    const doc = await PDFDocument.create()
    doc.addPage()
    const other = Buffer.from(await doc.save())

    const unknown = await check(other)
    const notPdf = await check(Buffer.from('just some text'), 'notes.txt')
    const empty = await request(ctx.app).post('/api/verify').attach('file', Buffer.alloc(0), { filename: 'empty.pdf', contentType: 'application/pdf' })
    const damaged = await check(Buffer.concat([Buffer.from('%PDF-1.7\n'), Buffer.from('garbage'.repeat(100))]))
    const none = await request(ctx.app).post('/api/verify')
    const number = await request(ctx.app).get('/api/verify/SP-2026-999999')
    const badNumber = await request(ctx.app).get('/api/verify/whatever')

    expect(unknown.body.answer).toMatchObject({ outcome: 'unknown', headline: 'This archive does not know this document' })
    expect(notPdf.status).toBe(415)
    expect(notPdf.body.error.fields).toEqual({ file: 'Not a PDF' })
    expect(empty.status).toBe(400)
    expect(damaged.status).toBe(200)
    expect(damaged.body.answer.outcome).toBe('unknown')
    expect(none.status).toBe(400)
    expect(number.body.answer.outcome).toBe('unknown')
    expect(badNumber.status).toBe(400)
  })
})
