import { execFileSync, spawnSync } from 'node:child_process'
import fs from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import { afterAll, beforeAll, beforeEach, describe, expect, inject, it } from 'vitest'
import { ReportQueue } from '../../server/jobs/report-queue'
import type { MailService } from '../../server/mail/mail.service'
import { startSmtpCapture } from '../../server/mail/smtp-capture'
import type { ReportRenderer, ReportService } from '../../server/services/report.service'
import { createTestContext, resetDatabase, TEST_PASSWORD, type TestContext } from '../helpers/context'
import { readyRun, sign } from '../helpers/runs'

let ctx: TestContext
let capture: Awaited<ReturnType<typeof startSmtpCapture>>
let certDir: string
const services = (c: TestContext) => c.services

beforeAll(async () => {
  capture = await startSmtpCapture()
  certDir = fs.mkdtempSync(path.join(os.tmpdir(), 'startproof-certs-'))
  ctx = await createTestContext({ SMTP_URL: capture.url, PUBLIC_URL: 'http://startproof.test', CERT_DIR: certDir })
})
afterAll(async () => {
  await services(ctx).renderer.close()
  await services(ctx).mail.stop()
  await ctx.close()
  await capture.close()
  fs.rmSync(certDir, { recursive: true, force: true })
})
beforeEach(async () => {
  await resetDatabase(ctx.db)
  capture.messages.length = 0
})

async function acceptedRun(c: TestContext) {
  const s = await readyRun(c)
  // A note that tries markup and a link must print as text and reach nothing.
  await s.techAgent
    .put(`/api/runs/${s.run.id}/steps/oil-running`)
    .send({ changeId: crypto.randomUUID(), baseVersion: 0, note: 'Checked <script>alert(1)</script> see http://example.test/x <img src="http://example.test/p.png">' })
    .expect(200)
  expect((await sign(s.techAgent, s.run.id, 'performed_by')).status).toBe(201)
  expect((await sign(s.repAgent, s.run.id, 'accepted_by')).status).toBe(201)
  return s
}

const tool = (cmd: string, args: string[]) => spawnSync(cmd, args, { encoding: 'utf8' })

describe('the sealed handover report', () => {
  it('when a run is accepted, then its report is rendered, sealed, archived, downloadable and mailed to the distribution list', async () => {
    const s = await acceptedRun(ctx)
    const pending = (await s.repAgent.get(`/api/runs/${s.run.id}/report`)).body.report
    expect(pending).toMatchObject({ status: 'pending', paper: 'Letter' })
    expect(pending.reportNumber).toMatch(/^SP-\d{4}-\d{6}$/)

    const report = await services(ctx).reports.process(pending.id)
    expect(report.status).toBe('ready')

    const view = (await s.repAgent.get(`/api/runs/${s.run.id}/report`)).body.report
    expect(view).toMatchObject({ status: 'ready', downloadUrl: `/api/runs/${s.run.id}/report.pdf` })
    const download = await s.repAgent.get(view.downloadUrl).buffer(true).parse((res, cb) => {
      const chunks: Buffer[] = []
      res.on('data', (c: Buffer) => chunks.push(c))
      res.on('end', () => cb(null, Buffer.concat(chunks)))
    })
    expect(download.status).toBe(200)
    expect(download.headers['content-type']).toBe('application/pdf')
    const pdf = download.body as Buffer
    const file = path.join(certDir, 'report.pdf')
    fs.writeFileSync(file, pdf)

    const text = execFileSync('pdftotext', ['-layout', file, '-'], { encoding: 'utf8' })
    expect(text).toContain('CH-7')
    expect(text).toContain('36 psid')
    expect(text).toContain('Ada Tech')
    expect(text).toContain('Olive Owner')
    expect(text).toMatch(/Performed by/)
    expect(text).toMatch(/Accepted by/)
    expect(text).toContain('<script>alert(1)</script>')
    expect(text).toContain(view.reportNumber)
    expect(execFileSync('pdffonts', [file], { encoding: 'utf8' })).toMatch(/SourceSans3/)
    const sig = tool('pdfsig', [file])
    expect(sig.stdout).toMatch(/Signature is Valid/)
    // One flipped byte inside the signed range: the reader must call it altered (the seal covers every byte but itself).
    const altered = Buffer.from(pdf)
    const at = altered.indexOf('CH-7') > 0 ? altered.indexOf('/Type /Page') + 2 : 200
    altered[at] = altered[at] ^ 0x20
    fs.writeFileSync(file, altered)
    expect(tool('pdfsig', [file]).stdout).toMatch(/Digest Mismatch|Signature is Invalid/)

    await services(ctx).mail.drain()
    const mailed = capture.messages.find((m) => m.subject.startsWith(`Start-up report ${view.reportNumber}`))
    expect(mailed?.to).toEqual(['records@owner.test'])
    expect(mailed?.attachments).toHaveLength(1)
    expect(mailed?.attachments[0]).toMatchObject({ filename: `${view.reportNumber}.pdf`, contentType: 'application/pdf' })
    expect(Buffer.compare(mailed!.attachments[0].content, pdf)).toBe(0)
    await expect(ctx.db.query(`UPDATE report SET sha256 = repeat('0', 64) WHERE id = $1`, [report.id])).rejects.toThrow(/archived/)
  }, 90_000)

  it('when the report cannot be rendered, then it says why, is retried, fails after three tries, and the run is untouched', async () => {
    const broken = await createTestContext({ CHROMIUM_PATH: '/nonexistent/chromium', CERT_DIR: certDir })
    try {
      const s = await acceptedRun(broken)
      const before = (await s.repAgent.get(`/api/runs/${s.run.id}`)).body.run
      const pending = (await s.repAgent.get(`/api/runs/${s.run.id}/report`)).body.report
      for (let i = 0; i < 3; i++) await expect(services(broken).reports.process(pending.id)).rejects.toThrow()
      const failed = (await s.repAgent.get(`/api/runs/${s.run.id}/report`)).body.report
      expect(failed).toMatchObject({ status: 'failed', attempts: 3, downloadUrl: null })
      expect(failed.lastError).toMatch(/nonexistent|spawn|ENOENT|Browser/i)
      const after = (await s.repAgent.get(`/api/runs/${s.run.id}`)).body.run
      expect(after.readings).toEqual(before.readings)
      expect(after.state).toBe('accepted')
      const retried = await s.adminAgent.post(`/api/runs/${s.run.id}/report/retry`)
      expect(retried.body.report).toMatchObject({ status: 'pending', attempts: 0 })
    } finally {
      await services(broken).renderer.close()
      await broken.close()
    }
  }, 60_000)

  it('when the job queue runs, then acceptance alone leads to a ready report', async () => {
    const queue = services(ctx).queue
    await queue.start(services(ctx).reports)
    try {
      const s = await acceptedRun(ctx)
      let status = 'pending'
      for (let i = 0; i < 60 && status === 'pending'; i++) {
        await new Promise((r) => setTimeout(r, 500))
        status = (await s.repAgent.get(`/api/runs/${s.run.id}/report`)).body.report.status
      }
      expect(status).toBe('ready')
    } finally {
      await queue.stop()
    }
  }, 90_000)

  it('when a contractor of the project asks after acceptance, then they can download it; the performer password is never needed', async () => {
    const s = await acceptedRun(ctx)
    const pending = (await s.repAgent.get(`/api/runs/${s.run.id}/report`)).body.report
    await services(ctx).reports.process(pending.id)
    expect(TEST_PASSWORD).toBeTruthy()
    const tech = (await s.techAgent.get(`/api/runs/${s.run.id}/report.pdf`))
    expect(tech.status).toBe(200)
  }, 60_000)
})
