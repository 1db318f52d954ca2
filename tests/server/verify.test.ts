import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest'
import request from 'supertest'
import { PDFDocument } from 'pdf-lib'
import type { ReportRenderer, ReportService } from '../../server/services/report.service'
import { createTestContext, resetDatabase, type TestContext } from '../helpers/context'
import { issueReport, makeSignable, readyRun, sign } from '../helpers/runs'
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
