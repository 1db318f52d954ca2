import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest'
import type { MailService } from '../../server/mail/mail.service'
import { startSmtpCapture } from '../../server/mail/smtp-capture'
import { createTestContext, resetDatabase, signedInAgent, TEST_PASSWORD, type TestContext } from '../helpers/context'
import { readyRun as readyRunIn, sign, SIGNATURE, snapshotOf } from '../helpers/runs'

let ctx: TestContext
let capture: Awaited<ReturnType<typeof startSmtpCapture>>
const mail = () => ctx.services.mail

beforeAll(async () => {
  capture = await startSmtpCapture()
  ctx = await createTestContext({ SMTP_URL: capture.url, PUBLIC_URL: 'http://startproof.test' })
})
afterAll(async () => {
  await mail().stop()
  await ctx.close()
  await capture.close()
})
beforeEach(async () => {
  await resetDatabase(ctx.db)
  capture.messages.length = 0
})

const readyRun = () => readyRunIn(ctx)

describe('signing as performer', () => {
  it('when the review allows it and the password is right, then the run is submitted and the owner rep is e-mailed', async () => {
    const s = await readyRun()
    const review = (await s.techAgent.get(`/api/runs/${s.run.id}/review`)).body.review
    expect(review.canSign).toBe(true)

    const res = await sign(s.techAgent, s.run.id, 'performed_by')

    expect(res.status).toBe(201)
    expect(res.body.signature).toMatchObject({ meaning: 'performed_by', meaningLabel: 'Performed by', printedName: 'Ada Tech', role: 'Commissioning technician', snapshotSha256: review.snapshotSha256, voided: false })
    expect(res.body.signature.signedAtLocal).toMatch(/^\d{4}-\d\d-\d\d \d\d:\d\d C[SD]T$/)
    expect((await s.techAgent.get(`/api/runs/${s.run.id}`)).body.run.state).toBe('submitted')
    expect(await mail().drain()).toBe(1)
    expect(capture.messages).toHaveLength(1)
    expect(capture.messages[0]).toMatchObject({ to: ['olive@owner.test'], subject: 'Start-up of CH-7 awaits your acceptance' })
    expect(capture.messages[0].text).toContain(`http://startproof.test/runs/${s.run.id}/review`)
  })

  it('when the password is wrong, the run changed since the review, or it is signed twice, then it is refused with a clear message', async () => {
    const s = await readyRun()
    const stale = await snapshotOf(s.techAgent, s.run.id)
    const wrong = await sign(s.techAgent, s.run.id, 'performed_by', { password: 'not my password' })
    expect(wrong.status).toBe(400)
    expect(wrong.body.error).toMatchObject({ code: 'wrong_password', fields: { password: 'Password is incorrect' } })

    await s.techAgent.put(`/api/runs/${s.run.id}/readings/oilTempRunning`).send({ changeId: randomUUID(), baseVersion: 1, entry: { value: 126, unit: 'degF' } }).expect(200)
    const changed = await sign(s.techAgent, s.run.id, 'performed_by', { snapshotSha256: stale })
    expect(changed.status).toBe(409)
    expect(changed.body.error.message).toBe('The run changed after you opened the review; review it again, then sign')

    await sign(s.techAgent, s.run.id, 'performed_by').then((r) => expect(r.status).toBe(201))
    const twice = await sign(s.techAgent, s.run.id, 'performed_by')
    expect(twice.status).toBe(409)
    expect(twice.body.error.code).toBe('already_signed')
    const noImage = await s.techAgent.post(`/api/runs/${s.run.id}/sign`).send({ meaning: 'performed_by', password: TEST_PASSWORD, signatureImage: 'data:image/jpeg;base64,AAAA', snapshotSha256: stale })
    expect(noImage.status).toBe(400)
    expect(noImage.body.error.fields).toEqual({ signatureImage: 'The signature must be a PNG image' })
  })

  it('when a required value is missing, then signing is refused with what blocks it', async () => {
    const s = await readyRun()
    await s.techAgent.put(`/api/runs/${s.run.id}/readings/oilTempRunning`).send({ changeId: randomUUID(), baseVersion: 1, entry: null }).expect(200)
    const res = await sign(s.techAgent, s.run.id, 'performed_by')
    expect(res.status).toBe(409)
    expect(res.body.error.code).toBe('not_ready')
    expect(res.body.error.message).toMatch(/Oil temperature \(sump\) is required and has no value/)
  })
})

describe('acceptance and return', () => {
  it('when the owner rep accepts, then the run is accepted and frozen at the API and in the database', async () => {
    const s = await readyRun()
    await sign(s.techAgent, s.run.id, 'performed_by').then((r) => expect(r.status).toBe(201))

    const techAccepts = await sign(s.techAgent, s.run.id, 'accepted_by')
    const res = await sign(s.repAgent, s.run.id, 'accepted_by')

    expect(techAccepts.status).toBe(403)
    expect(res.status).toBe(201)
    expect(res.body.signature).toMatchObject({ meaningLabel: 'Accepted by', printedName: 'Olive Owner', role: "Owner's representative" })
    const run = (await s.repAgent.get(`/api/runs/${s.run.id}`)).body.run
    expect(run.state).toBe('accepted')
    expect(run.signatures.map((x: { meaning: string }) => x.meaning)).toEqual(['performed_by', 'accepted_by'])
    const edit = await s.techAgent.put(`/api/runs/${s.run.id}/readings/oilTempRunning`).send({ changeId: randomUUID(), baseVersion: 1, entry: { value: 130, unit: 'degF' } })
    expect(edit.status).toBe(409)
    expect(edit.body.error.code).toBe('run_locked')
    await expect(ctx.db.query(`UPDATE signature SET voided = true WHERE run_id = $1`, [s.run.id])).rejects.toThrow(/accepted/)
    const again = await sign(s.repAgent, s.run.id, 'accepted_by')
    expect(again.status).toBe(409)
  })

  it("when the owner rep returns it with comments, then the performer's signature is voided but kept, the technician is told, and can sign again", async () => {
    const s = await readyRun()
    await sign(s.techAgent, s.run.id, 'performed_by').then((r) => expect(r.status).toBe(201))
    await mail().drain()

    const noComment = await s.repAgent.post(`/api/runs/${s.run.id}/return`).send({ password: TEST_PASSWORD })
    const returned = await s.repAgent.post(`/api/runs/${s.run.id}/return`).send({ comments: 'Record the oil temperature at full load', password: TEST_PASSWORD })

    expect(noComment.status).toBe(400)
    expect(noComment.body.error.fields).toEqual({ comments: 'Say what must change' })
    expect(returned.status).toBe(200)
    expect(returned.body.run.state).toBe('returned')
    expect(returned.body.run.signatures).toEqual([
      expect.objectContaining({ meaning: 'performed_by', voided: true, voidReason: 'Returned by Olive Owner: Record the oil temperature at full load' }),
    ])
    await mail().drain()
    expect(capture.messages.map((m) => [m.to[0], m.subject])).toContainEqual(['ada@firm.test', 'Start-up of CH-7 was returned with comments'])
    await s.techAgent.put(`/api/runs/${s.run.id}/readings/oilTempRunning`).send({ changeId: randomUUID(), baseVersion: 1, entry: { value: 131, unit: 'degF' } }).expect(200)
    const resigned = await sign(s.techAgent, s.run.id, 'performed_by')
    expect(resigned.status).toBe(201)
    const [{ n }] = await ctx.db.query(`SELECT count(*)::int AS n FROM signature WHERE run_id = $1`, [s.run.id])
    expect(n).toBe(2)
    await expect(ctx.db.query(`DELETE FROM signature WHERE run_id = $1`, [s.run.id])).rejects.toThrow(/never deleted/)
    const events = (await s.techAgent.get(`/api/runs/${s.run.id}/audit`)).body.events.map((e: { action: string }) => e.action)
    expect(events.filter((a: string) => a.startsWith('run.'))).toEqual(['run.start', 'run.sign_performed', 'run.return', 'run.sign_performed'])
  })

  it('when an owner rep of another project or a contractor tries, then 404', async () => {
    const s = await readyRun()
    await sign(s.techAgent, s.run.id, 'performed_by').then((r) => expect(r.status).toBe(201))
    const other = await signedInAgent(ctx.app, s.otherRep)
    expect((await other.post(`/api/runs/${s.run.id}/sign`).send({ meaning: 'accepted_by', password: TEST_PASSWORD, signatureImage: SIGNATURE, snapshotSha256: 'a'.repeat(64) })).status).toBe(404)
  })
})

describe('mail delivery and the Outbox', () => {
  it('when the mail server is down, then signing still succeeds, the message waits with its error, and goes out once it is back', async () => {
    const s = await readyRun()
    await capture.close()
    try {
      const res = await sign(s.techAgent, s.run.id, 'performed_by')
      expect(res.status).toBe(201)
      expect(await mail().drain()).toBe(0)
      const outbox = (await s.adminAgent.get('/api/outbox')).body.messages
      expect(outbox[0]).toMatchObject({ kind: 'awaiting_acceptance', status: 'queued', attempts: 1 })
      expect(outbox[0].lastError).toMatch(/ECONNREFUSED|connect/i)
    } finally {
      capture = await startSmtpCapture(capture.port)
    }
    await ctx.db.query(`UPDATE outbound_mail SET next_attempt_at = now()`)
    expect(await mail().drain()).toBe(1)
    const outbox = (await s.adminAgent.get('/api/outbox')).body.messages
    expect(outbox[0]).toMatchObject({ status: 'sent', attempts: 2, lastError: null })
    const one = (await s.adminAgent.get(`/api/outbox/${outbox[0].id}`)).body.message
    expect(one.text).toContain('awaits your acceptance')
    expect((await s.techAgent.get('/api/outbox')).status).toBe(403)
  })
})
