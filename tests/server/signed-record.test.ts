import { execFileSync } from 'node:child_process'
import { createHash, randomUUID } from 'node:crypto'
import fs from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import sharp from 'sharp'
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest'
import { asOwner, createTestContext, resetDatabase, signedInAgent, TEST_PASSWORD, type TestContext } from '../helpers/context'
import { BLANK_SIGNATURE, readyRun as readyRunIn, sign, SIGNATURE, snapshotOf } from '../helpers/runs'
import { binary, unzip } from '../helpers/zip'

let ctx: TestContext

beforeAll(async () => {
  ctx = await createTestContext({ PUBLIC_URL: 'http://startproof.test' })
})
afterAll(async () => {
  await ctx.services.renderer.close()
  await ctx.close()
})
beforeEach(async () => {
  await resetDatabase(ctx.db)
})

const readyRun = () => readyRunIn(ctx)

/** A run signed by its performer and accepted, with its report row waiting for a render. */
async function acceptedWithPendingReport() {
  const s = await readyRun()
  await sign(s.techAgent, s.run.id, 'performed_by').then((r) => expect(r.status).toBe(201))
  await sign(s.repAgent, s.run.id, 'accepted_by').then((r) => expect(r.status).toBe(201))
  const pending = (await s.repAgent.get(`/api/runs/${s.run.id}/report`)).body.report as { id: string; reportNumber: string }
  return { s, pending }
}

/** A statement as the database owner: what a test needs to stage a fault the application's own role may not cause. */
const owner = (sql: string, params: unknown[] = []) => asOwner(async (client) => (await client.query(sql, params)).rows)
const sha256 = (text: string | Buffer) => createHash('sha256').update(text).digest('hex')
const PHOTO = fs.readFileSync(path.join(import.meta.dirname, '../helpers/signature-drawn.png'))

async function pdfText(pdf: Buffer): Promise<string> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'startproof-record-'))
  try {
    fs.writeFileSync(path.join(dir, 'r.pdf'), pdf)
    return execFileSync('pdftotext', ['-layout', path.join(dir, 'r.pdf'), '-'], { encoding: 'utf8' })
  } finally {
    fs.rmSync(dir, { recursive: true, force: true })
  }
}

describe('the signed snapshot is the record', () => {
  it('when the performer signs, then the exact snapshot is kept and hashes to the signed value; the database refuses to change it', async () => {
    const s = await readyRun()
    const review = (await s.techAgent.get(`/api/runs/${s.run.id}/review`)).body.review
    const signed = await sign(s.techAgent, s.run.id, 'performed_by')
    expect(signed.status).toBe(201)

    const [row] = await ctx.db.query(`SELECT sha256, content FROM run_snapshot WHERE run_id = $1`, [s.run.id])
    expect(row.sha256).toBe(review.snapshotSha256)
    expect(sha256(row.content)).toBe(signed.body.signature.snapshotSha256)
    const content = JSON.parse(row.content)
    expect(content).toMatchObject({ format: 'startproof.run-snapshot', version: 2, equipment: { tag: 'CH-7', serialNumber: 'TW-7' }, project: { code: s.project.code, timeZone: s.project.timeZone } })
    expect(content.equipment.designPoint.evaporatorWaterFlow).toBeDefined()
    expect(content.readings.oilPressureRunning.evaluation.verdict).toBe('pass')
    // The review of a submitted run is the kept snapshot, so the owner's representative signs exactly that.
    expect((await s.repAgent.get(`/api/runs/${s.run.id}/review`)).body.review.snapshotSha256).toBe(row.sha256)

    await expect(ctx.db.query(`UPDATE run_snapshot SET content = '{}' WHERE run_id = $1`, [s.run.id])).rejects.toThrow(/never changed or deleted/)
    await expect(ctx.db.query(`DELETE FROM run_snapshot WHERE run_id = $1`, [s.run.id])).rejects.toThrow(/never changed or deleted/)
  })

  it('when the acceptance names another snapshot, or the run changed underneath the signature, then it is refused saying what changed', async () => {
    const s = await readyRun()
    await sign(s.techAgent, s.run.id, 'performed_by').then((r) => expect(r.status).toBe(201))

    const other = await sign(s.repAgent, s.run.id, 'accepted_by', { snapshotSha256: 'a'.repeat(64) })
    expect(other.status).toBe(409)
    expect(other.body.error).toMatchObject({ code: 'snapshot_mismatch', fields: { snapshotSha256: 'Not the snapshot the performer signed' } })

    // A change that went around the product's own rules (a direct database edit): acceptance still sees it.
    await ctx.db.query(`UPDATE equipment SET design_point = jsonb_set(design_point, '{evaporatorWaterFlow,value}', '0.2271') WHERE id = $1`, [s.equipment.id])
    const changed = await sign(s.repAgent, s.run.id, 'accepted_by')
    expect(changed.status).toBe(409)
    expect(changed.body.error.code).toBe('changed_since_signed')
    expect(changed.body.error.message).toContain("the equipment's design point: evaporatorWaterFlow")
    expect(changed.body.changes).toEqual(["the equipment's design point: evaporatorWaterFlow"])
    expect((await s.repAgent.get(`/api/runs/${s.run.id}`)).body.run.state).toBe('submitted')
    expect((await ctx.db.query(`SELECT count(*)::int AS n FROM signature WHERE run_id = $1 AND meaning = 'accepted_by'`, [s.run.id]))[0].n).toBe(0)
  })

  it('when the performer later holds the owner role, then they still cannot accept their own run; an admin signs neither', async () => {
    const s = await readyRun()
    await sign(s.techAgent, s.run.id, 'performed_by').then((r) => expect(r.status).toBe(201))
    await ctx.db.query(`UPDATE app_user SET role = 'owner_rep' WHERE id = $1`, [s.tech.id])

    const own = await sign(s.techAgent, s.run.id, 'accepted_by')
    expect(own.status).toBe(409)
    expect(own.body.error.code).toBe('same_person')
    expect(own.body.error.message).toMatch(/cannot also accept it/)
    const admin = await s.adminAgent.post(`/api/runs/${s.run.id}/sign`).send({ meaning: 'accepted_by', password: TEST_PASSWORD, signatureImage: SIGNATURE, snapshotSha256: await snapshotOf(s.repAgent, s.run.id) })
    expect(admin.status).toBe(403)
    expect((await sign(s.repAgent, s.run.id, 'accepted_by')).status).toBe(201)
  })

  it('when the pad is blank (a fully transparent PNG) or the image is not a PNG, then 400 says to draw the signature', async () => {
    const s = await readyRun()
    const blank = await sign(s.techAgent, s.run.id, 'performed_by', { signatureImage: BLANK_SIGNATURE })
    expect(blank.status).toBe(400)
    expect(blank.body.error.code).toBe('blank_signature')
    expect(blank.body.error.message).toMatch(/^The signature pad is blank: draw your signature \(at least 0\.2 % of the pad must carry ink; this drawing has 0\.00 %\)$/)
    expect(blank.body.error.fields).toEqual({ signatureImage: 'Draw your signature in the box, then sign' })
    // One dot on a 300×100 pad: ink, but nowhere near a signature.
    const dot = await sharp(Buffer.from('<svg xmlns="http://www.w3.org/2000/svg" width="300" height="100"><circle cx="150" cy="50" r="2" fill="#1d2a44"/></svg>')).png().toBuffer()
    const tooLittle = await sign(s.techAgent, s.run.id, 'performed_by', { signatureImage: `data:image/png;base64,${dot.toString('base64')}` })
    expect(tooLittle.status).toBe(400)
    expect(tooLittle.body.error.message).toMatch(/^Too little is drawn for a signature: draw your signature \(at least 0\.2 % of the pad must carry ink; this drawing has 0\.0\d %\)$/)
    const garbage = await sign(s.techAgent, s.run.id, 'performed_by', { signatureImage: `data:image/png;base64,${Buffer.concat([PHOTO.subarray(0, 40), Buffer.alloc(200)]).toString('base64')}` })
    expect(garbage.status).toBe(400)
    expect(garbage.body.error.fields.signatureImage).toBeDefined()
    expect((await s.techAgent.get(`/api/runs/${s.run.id}`)).body.run.state).toBe('in_progress')
  })

  it('when a run is accepted, then its report row and number exist at once; if the report cannot be created, the acceptance is not kept either', async () => {
    const s = await readyRun()
    await sign(s.techAgent, s.run.id, 'performed_by').then((r) => expect(r.status).toBe(201))
    await owner(`CREATE FUNCTION record_test_refuse_report() RETURNS trigger LANGUAGE plpgsql AS $$ BEGIN RAISE EXCEPTION 'no report today'; END $$`)
    await owner(`CREATE TRIGGER record_test_refuse_report BEFORE INSERT ON report FOR EACH ROW EXECUTE FUNCTION record_test_refuse_report()`)
    try {
      const refused = await sign(s.repAgent, s.run.id, 'accepted_by')
      expect(refused.status).toBeGreaterThanOrEqual(500)
      expect((await ctx.db.query(`SELECT count(*)::int AS n FROM signature WHERE run_id = $1 AND meaning = 'accepted_by'`, [s.run.id]))[0].n).toBe(0)
      expect((await s.repAgent.get(`/api/runs/${s.run.id}`)).body.run.state).toBe('submitted')
    } finally {
      await owner(`DROP TRIGGER record_test_refuse_report ON report`)
      await owner(`DROP FUNCTION record_test_refuse_report`)
    }
    const accepted = await sign(s.repAgent, s.run.id, 'accepted_by')
    expect(accepted.status).toBe(201)
    const [report] = await ctx.db.query(`SELECT report_number, status, snapshot_sha256, equipment_tag FROM report WHERE run_id = $1`, [s.run.id])
    expect(report).toMatchObject({ status: 'pending', snapshot_sha256: accepted.body.signature.snapshotSha256, equipment_tag: 'CH-7' })
    expect(report.report_number).toMatch(/^SP-\d{4}-\d{6}$/)
  })
})

describe('after issue nothing follows a rename', () => {
  it('when the design point, tag, serial and project name change after acceptance (even before rendering), then the report, the run, the archive, Verify and the package keep what was signed', async () => {
    const s = await readyRun()
    await sign(s.techAgent, s.run.id, 'performed_by').then((r) => expect(r.status).toBe(201))
    const accepted = await sign(s.repAgent, s.run.id, 'accepted_by')
    expect(accepted.status).toBe(201)
    const signedHash = accepted.body.signature.snapshotSha256
    const pending = (await s.repAgent.get(`/api/runs/${s.run.id}/report`)).body.report
    const projectName = (await ctx.db.query(`SELECT name FROM project WHERE id = $1`, [s.project.id]))[0].name

    // Between acceptance and rendering: a new tag, serial, design flow and project name.
    await ctx.db.query(`UPDATE equipment SET tag = 'CH-77', serial_number = 'RENAMED-1', design_point = jsonb_set(design_point, '{evaporatorWaterFlow,value}', '0.2271') WHERE id = $1`, [s.equipment.id])
    await ctx.db.query(`UPDATE project SET name = 'Renamed project' WHERE id = $1`, [s.project.id])
    const ready = await ctx.services.reports.process(pending.id)
    expect(ready.status).toBe('ready')
    expect(ready.snapshotSha256).toBe(signedHash)

    const pdf = (await s.repAgent.get(`/api/runs/${s.run.id}/report.pdf`).buffer(true).parse(binary)).body as Buffer
    const text = await pdfText(pdf)
    expect(text).toContain('CH-7')
    expect(text).not.toContain('CH-77')
    expect(text).toContain('TW-7')
    expect(text).not.toContain('RENAMED-1')
    expect(text).not.toContain('Renamed project')
    expect(text.replace(/\s+/g, '')).toContain(signedHash)

    const run = (await s.repAgent.get(`/api/runs/${s.run.id}`)).body.run
    expect(run).toMatchObject({ equipmentTag: 'CH-7', projectName, state: 'accepted' })
    expect(run.designPoint.evaporatorWaterFlow.value).not.toBe(0.2271)

    const listed = (await s.repAgent.get(`/api/runs?projectId=${s.project.id}`)).body.runs
    expect(listed.map((r: { equipmentTag: string; projectName: string }) => [r.equipmentTag, r.projectName])).toEqual([['CH-7', projectName]])

    const archive = (await s.repAgent.get('/api/archive')).body.items
    expect(archive.map((i: { equipmentTag: string; serialNumber: string; projectName: string }) => [i.equipmentTag, i.serialNumber, i.projectName])).toEqual([['CH-7', 'TW-7', projectName]])

    const verify = (await s.repAgent.get(`/api/verify/${ready.reportNumber}`)).body
    expect(JSON.stringify(verify)).not.toContain('CH-77')
    expect(JSON.stringify(verify)).not.toContain('Renamed project')

    const contractor = await signedInAgent(ctx.app, s.admin)
    const zip = await unzip((await contractor.get(`/api/projects/${s.project.id}/handover.zip`).buffer(true).parse(binary)).body as Buffer)
    const runJson = [...zip.entries()].find(([name]) => name.endsWith('/run.json'))
    expect(runJson).toBeDefined()
    const packaged = JSON.parse(runJson![1].toString('utf8'))
    expect(packaged.run.equipmentTag).toBe('CH-7')
    expect(packaged.run.designPoint.evaporatorWaterFlow.value).not.toBe(0.2271)
  }, 60_000)

  it('when the kept snapshot is not the one both signatures carry, then the renderer refuses to seal it and says why', async () => {
    const { pending } = await acceptedWithPendingReport()
    await ctx.db.query(`UPDATE report SET snapshot_sha256 = $2 WHERE id = $1`, [pending.id, 'f'.repeat(64)])

    await expect(ctx.services.reports.process(pending.id)).rejects.toThrow(/do not carry one snapshot/)
    const [row] = await ctx.db.query(`SELECT status, storage_key, last_error FROM report WHERE id = $1`, [pending.id])
    expect(row).toMatchObject({ status: 'failed', storage_key: null })
    expect(row.last_error).toMatch(/it is not sealed/)
  })
})

describe('a database from before signed snapshots were kept', () => {
  it('when an accepted run has no kept snapshot, then its page still opens from its frozen rows, and a pending report of it is not sealed, with the reason', async () => {
    const { s, pending } = await acceptedWithPendingReport()
    await owner(`ALTER TABLE run_snapshot DISABLE TRIGGER run_snapshot_append_only`)
    try {
      await owner(`DELETE FROM run_snapshot WHERE run_id = $1`, [s.run.id])
    } finally {
      await owner(`ALTER TABLE run_snapshot ENABLE TRIGGER run_snapshot_append_only`)
    }
    const run = await s.repAgent.get(`/api/runs/${s.run.id}`)
    expect(run.status).toBe(200)
    expect(run.body.run).toMatchObject({ state: 'accepted', equipmentTag: 'CH-7' })
    expect(run.body.run.readings.oilPressureRunning.entry).toEqual({ value: 36, unit: 'psid' })
    await expect(ctx.services.reports.process(pending.id)).rejects.toThrow(/accepted before signed snapshots were kept/)
    expect((await ctx.db.query(`SELECT status FROM report WHERE id = $1`, [pending.id]))[0].status).toBe('failed')
  })
})

describe('issue never leaves an accepted run without its report', () => {
  it('when an accepted run has no report (an acceptance from before this rule), then the sweep creates and queues one, and it is sealed with the signed hash', async () => {
    const s = await readyRun()
    await sign(s.techAgent, s.run.id, 'performed_by').then((r) => expect(r.status).toBe(201))
    const accepted = await sign(s.repAgent, s.run.id, 'accepted_by')
    // Simulate the old failure: the acceptance committed but its report row was never created.
    await owner(`ALTER TABLE report DISABLE TRIGGER report_frozen`)
    try {
      await owner(`DELETE FROM report WHERE run_id = $1`, [s.run.id])
    } finally {
      await owner(`ALTER TABLE report ENABLE TRIGGER report_frozen`)
    }
    const swept = await ctx.services.reports.reconcile()
    expect(swept.created).toBe(1)
    const [report] = await ctx.db.query(`SELECT id, status, snapshot_sha256 FROM report WHERE run_id = $1`, [s.run.id])
    expect(report).toMatchObject({ status: 'pending', snapshot_sha256: accepted.body.signature.snapshotSha256 })
    expect(swept.pending).toEqual([report.id])
    const ready = await ctx.services.reports.process(report.id)
    expect(ready).toMatchObject({ status: 'ready', snapshotSha256: accepted.body.signature.snapshotSha256 })
    expect(await ctx.services.reports.reconcile()).toEqual({ created: 0, pending: [] })
  }, 60_000)

  it('when two workers take the same report at once, then it is rendered once', async () => {
    const { pending } = await acceptedWithPendingReport()
    const [a, b] = await Promise.all([ctx.services.reports.process(pending.id), ctx.services.reports.process(pending.id)])
    // One render claims the report; the other finds it held (or already ready) and leaves it alone.
    expect([a.status, b.status]).toContain('ready')
    const [{ n }] = await ctx.db.query(`SELECT count(*)::int AS n FROM audit_event WHERE action = 'report.issue' AND entity_id = $1`, [pending.id])
    expect(n).toBe(1)
    const [{ attempts }] = await ctx.db.query(`SELECT attempts FROM report WHERE id = $1`, [pending.id])
    expect(attempts).toBe(1)
  }, 60_000)
})

describe('evidence and changes belong where they are sent', () => {
  it('when a photo field names attachments that do not exist, belong to another run or another field, then 400 names the field; its own photo is accepted', async () => {
    const s = await readyRun()
    const upload = (runId: string, fieldId?: string) => {
      const req = s.techAgent.post(`/api/runs/${runId}/attachments`).field('stepId', 'training-record')
      return (fieldId ? req.field('fieldId', fieldId) : req).attach('file', PHOTO, { filename: 'sheet.png', contentType: 'image/png' })
    }
    const own = (await upload(s.run.id, 'attendanceSheet')).body.attachment.id
    const stepOnly = (await upload(s.run.id)).body.attachment.id
    const otherRun = (await s.techAgent.post(`/api/equipment/${s.equipment.id}/runs`).send({ templateId: s.template.id }).expect(201)).body.run
    const foreign = (await upload(otherRun.id, 'attendanceSheet')).body.attachment.id
    const put = (value: string[], baseVersion = 0) =>
      s.techAgent.put(`/api/runs/${s.run.id}/readings/attendanceSheet`).send({ changeId: randomUUID(), baseVersion, entry: { value } })

    for (const value of [[randomUUID()], [foreign], [own, foreign], ['not-a-uuid']]) {
      const res = await put(value)
      expect(res.status).toBe(400)
      expect(res.body.error.code).toBe('foreign_attachment')
      expect(res.body.error.fields.attendanceSheet).toMatch(/not attached to this field of this run/)
    }
    const ok = await put([own, stepOnly])
    expect(ok.status).toBe(200)
    expect(ok.body.reading.entry).toEqual({ value: [own, stepOnly] })
  })

  it('when one change id is used on another reading, a step or another run, then each is a change of its own; only the same target repeats', async () => {
    const s = await readyRun()
    const changeId = randomUUID()
    const temp = await s.techAgent.put(`/api/runs/${s.run.id}/readings/oilTempRunning`).send({ changeId, baseVersion: 1, entry: { value: 127, unit: 'degF' } })
    const pressure = await s.techAgent.put(`/api/runs/${s.run.id}/readings/oilPressureRunning`).send({ changeId, baseVersion: 1, entry: { value: 37, unit: 'psid' } })
    const step = await s.techAgent.put(`/api/runs/${s.run.id}/steps/oil-running`).send({ changeId, baseVersion: 0, note: 'Steady after 20 minutes' })
    expect([temp.status, pressure.status, step.status]).toEqual([200, 200, 200])
    expect(temp.body.duplicate).toBe(false)
    expect(pressure.body.duplicate).toBe(false)
    expect(pressure.body.reading.entry).toEqual({ value: 37, unit: 'psid' })
    expect(step.body.step.note).toBe('Steady after 20 minutes')

    const again = await s.techAgent.put(`/api/runs/${s.run.id}/readings/oilTempRunning`).send({ changeId, baseVersion: 1, entry: { value: 127, unit: 'degF' } })
    expect(again.body.duplicate).toBe(true)
    const [{ n }] = await ctx.db.query(`SELECT count(*)::int AS n FROM run_change WHERE id = $1`, [changeId])
    expect(n).toBe(3)
  })

  it('when a change states an author who is not the signed-in person, then it is refused (409) and not applied; the own author is accepted', async () => {
    const s = await readyRun()
    const other = await s.techAgent.put(`/api/runs/${s.run.id}/readings/oilTempRunning`).send({ changeId: randomUUID(), authorId: s.rep.id, baseVersion: 1, entry: { value: 128, unit: 'degF' } })
    expect(other.status).toBe(409)
    expect(other.body.error).toMatchObject({ code: 'author_mismatch', fields: { authorId: 'Not the signed-in person' } })
    const stepOther = await s.techAgent.put(`/api/runs/${s.run.id}/steps/oil-running`).send({ changeId: randomUUID(), authorId: randomUUID(), baseVersion: 0, note: 'x' })
    expect(stepOther.status).toBe(409)
    const mine = await s.techAgent.put(`/api/runs/${s.run.id}/readings/oilTempRunning`).send({ changeId: randomUUID(), authorId: s.tech.id, baseVersion: 1, entry: { value: 128, unit: 'degF' } })
    expect(mine.status).toBe(200)
    expect(mine.body.reading.updatedByName).toBe('Ada Tech')
    const badId = await s.techAgent.put(`/api/runs/${s.run.id}/readings/oilTempRunning`).send({ changeId: randomUUID(), authorId: 'me', baseVersion: 2, entry: { value: 128, unit: 'degF' } })
    expect(badId.status).toBe(400)
    expect(badId.body.error.fields.authorId).toBe('authorId must be a UUID')
  })
})
