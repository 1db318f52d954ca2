import { createHash, randomUUID } from 'node:crypto'
import fs from 'node:fs'
import path from 'node:path'
import { parse } from 'csv-parse/sync'
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest'
import type { ReportRenderer, ReportService } from '../../server/services/report.service'
import { createTestContext, makeUser, resetDatabase, signedInAgent, type TestContext } from '../helpers/context'
import { chiller, issueReport, makeSignable, readyRun } from '../helpers/runs'
import { binary, unzip } from '../helpers/zip'

let ctx: TestContext
const services = () => ctx.services

beforeAll(async () => {
  ctx = await createTestContext({ CERT_DIR: `/tmp/startproof-handover-certs-${process.pid}`, CLOSEOUT_MAX_MB: '1' })
})
afterAll(async () => {
  await services().renderer.close()
  await ctx.close()
})
beforeEach(() => resetDatabase(ctx.db))

const sha256 = (b: Buffer) => createHash('sha256').update(b).digest('hex')
// 1×1 pixel PNG, and the smallest well-formed PDF header a byte sniffer accepts.
const PNG = Buffer.from('iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mP8z8DwHwAFBQIAX8jx0gAAAABJRU5ErkJggg==', 'base64')
const PDF = Buffer.from('%PDF-1.4\n1 0 obj << /Type /Catalog >> endobj\ntrailer << /Root 1 0 R >>\n%%EOF\n')

type Scenario = Awaited<ReturnType<typeof readyRun>>

const issue = (s: Scenario, runId: string) => issueReport(s, runId, services().reports)

/** A scenario with a contractor on the project, a photo on the run, one accepted report and a re-test that supersedes it. */
async function twoReports() {
  const s = await readyRun(ctx)
  const contractor = await makeUser(ctx.db, s.org, 'contractor', { displayName: 'Cal Closeout', email: 'cal@contractor.test' })
  await s.adminAgent.put(`/api/projects/${s.project.id}/members/${contractor.id}`).expect(200)
  const contractorAgent = await signedInAgent(ctx.app, contractor)
  const photo = await s.techAgent.post(`/api/runs/${s.run.id}/attachments`).field('stepId', 'oil-running').attach('file', PNG, { filename: 'oil gauge.png', contentType: 'image/png' })
  expect(photo.status).toBe(201)
  const finding = await s.techAgent.post(`/api/runs/${s.run.id}/findings`).send({ stepId: 'oil-running', severity: 'minor', description: 'Oil sight glass label faded' })
  expect(finding.status).toBe(201)
  const first = await issue(s, s.run.id)
  const retest = (await s.techAgent.post(`/api/equipment/${s.equipment.id}/runs`).send({ templateId: s.template.id }).expect(201)).body.run
  await makeSignable(s.techAgent, retest)
  const second = await issue(s, retest.id)
  return { ...s, contractor, contractorAgent, first, second, retest }
}

describe('closeout documents', () => {
  it('when a contractor attaches documents, then members list and download them; owners and technicians may not attach; bad input is a 4xx naming the field', async () => {
    const s = await twoReports()
    const attach = (agent = s.contractorAgent, fields: Record<string, string> = { title: 'Chiller O&M manual', category: 'om_manual', documentDate: '2026-11-20' }, file: Buffer | null = PDF, name = 'O&M Handbuch – Kältemaschine.pdf') => {
      const req = agent.post(`/api/projects/${s.project.id}/closeout-documents`)
      for (const [k, v] of Object.entries(fields)) req.field(k, v)
      return file ? req.attach('file', file, { filename: name, contentType: 'application/pdf' }) : req
    }
    const ok = await attach()
    expect(ok.status).toBe(201)
    expect(ok.body.document).toMatchObject({ title: 'Chiller O&M manual', category: 'om_manual', documentDate: '2026-11-20', contentType: 'application/pdf', sizeBytes: PDF.length, sha256: sha256(PDF), uploadedByName: 'Cal Closeout' })
    expect(ok.body.document.fileName).toBe('O&M Handbuch – Kältemaschine.pdf')
    const byAdmin = await attach(s.adminAgent, { title: 'Compressor warranty letter', category: 'warranty', documentDate: '2026-10-02' }, PNG, 'warranty.png')
    expect(byAdmin.status).toBe(201)

    const list = (await s.repAgent.get(`/api/projects/${s.project.id}/closeout-documents`).expect(200)).body.documents
    expect(list.map((d: { title: string }) => d.title)).toEqual(['Chiller O&M manual', 'Compressor warranty letter'])
    const file = await s.repAgent.get(ok.body.document.downloadUrl).buffer(true).parse(binary)
    expect(file.status).toBe(200)
    expect(sha256(file.body)).toBe(sha256(PDF))
    expect(file.headers['content-disposition']).toContain("filename*=UTF-8''O%26M%20Handbuch")

    expect((await attach(s.repAgent)).status).toBe(403)
    expect((await attach(s.techAgent)).status).toBe(403)
    const missing = await attach(s.contractorAgent, { category: 'nope', documentDate: '2026-02-30' })
    expect(missing.status).toBe(400)
    expect(Object.keys(missing.body.error.fields)).toEqual(expect.arrayContaining(['title', 'category', 'documentDate']))
    const future = await attach(s.contractorAgent, { title: 'x', category: 'other', documentDate: '2099-01-01' })
    expect(future.status).toBe(400)
    expect(future.body.error.fields.documentDate).toMatch(/future/)
    const noFile = await attach(s.contractorAgent, undefined, null)
    expect(noFile.status).toBe(400)
    expect(noFile.body.error.fields.file).toBeTruthy()
    const notADoc = await attach(s.contractorAgent, undefined, Buffer.from('MZ\x90\x00 this is a program, not a manual'), 'manual.pdf')
    expect(notADoc.status).toBe(415)
    const huge = await attach(s.contractorAgent, undefined, Buffer.concat([PDF, Buffer.alloc(1.2 * 1024 * 1024)]))
    expect(huge.status).toBe(413)
    expect(huge.body.error.fields.file).toMatch(/larger than 1 MB/)

    // Another firm's contractor, and a contractor of this firm who is not on the project, see nothing of it.
    const outsider = await signedInAgent(ctx.app, await makeUser(ctx.db, s.org, 'contractor'))
    expect((await outsider.get(`/api/projects/${s.project.id}/closeout-documents`)).status).toBe(404)
    expect((await outsider.get(ok.body.document.downloadUrl)).status).toBe(404)
    expect((await outsider.get(`/api/closeout-documents/${ok.body.document.id}`)).status).toBe(404)
    expect((await attach(outsider)).status).toBe(404)

    // Kept for good: the database refuses to change or delete one.
    await expect(ctx.db.query(`DELETE FROM closeout_document WHERE id = $1`, [ok.body.document.id])).rejects.toThrow(/cannot be changed or deleted/)
    await expect(ctx.db.query(`UPDATE closeout_document SET title = 'x' WHERE id = $1`, [ok.body.document.id])).rejects.toThrow(/cannot be changed or deleted/)
  }, 180_000)
})

describe('handover package', () => {
  it('when a contractor exports the project, then the ZIP holds every report, run file, photo and closeout document, and every hash matches', async () => {
    const s = await twoReports()
    const doc = (await s.contractorAgent
      .post(`/api/projects/${s.project.id}/closeout-documents`)
      .field('title', 'Refrigerant leak test certificate')
      .field('category', 'test_certificate')
      .field('documentDate', '2026-11-28')
      .attach('file', PDF, { filename: 'leak-test.pdf', contentType: 'application/pdf' })
      .expect(201)).body.document

    const res = await s.contractorAgent.get(`/api/projects/${s.project.id}/handover.zip`).buffer(true).parse(binary)
    expect(res.status).toBe(200)
    expect(res.headers['content-type']).toBe('application/zip')
    expect(res.headers['content-disposition']).toMatch(new RegExp(`attachment; filename="?${s.project.code}-handover-\\d{4}-\\d{2}-\\d{2}\\.zip"?$`))
    const files = await unzip(res.body)

    // SHA256SUMS lists every other file, and each hash is right.
    const sums = files.get('SHA256SUMS')!.toString('utf8').trim().split('\n').map((l) => l.split('  ') as [string, string])
    expect(new Set(sums.map(([, p]) => p))).toEqual(new Set([...files.keys()].filter((p) => p !== 'SHA256SUMS')))
    for (const [hash, path] of sums) expect(sha256(files.get(path)!), path).toBe(hash)

    // The sealed PDFs are byte for byte the archived ones.
    const archive = (await s.contractorAgent.get('/api/archive').expect(200)).body.items as { reportNumber: string; sha256: string }[]
    expect(archive).toHaveLength(2)
    for (const item of archive) {
      expect(sha256(files.get(`reports/${item.reportNumber}.pdf`)!)).toBe(item.sha256)
      const direct = await s.contractorAgent.get(`/api/runs/${(await ctx.db.query(`SELECT run_id FROM report WHERE report_number = $1`, [item.reportNumber]))[0].run_id}/report.pdf`).buffer(true).parse(binary)
      expect(sha256(direct.body)).toBe(item.sha256)
    }
    for (const n of [s.first, s.second]) {
      for (const f of ['run.json', 'readings.csv', 'steps.csv', 'findings.csv', 'signatures.csv']) expect(files.has(`runs/${n}/${f}`), `${n}/${f}`).toBe(true)
    }
    // The photo taken during the first run, and the closeout document.
    const photoPath = [...files.keys()].find((p) => p.startsWith(`runs/${s.first}/files/`))!
    expect(photoPath).toBe(`runs/${s.first}/files/01-oil gauge.png`)
    expect(sha256(files.get(photoPath)!)).toBe(sha256(PNG))
    const docPath = `closeout/${s.project.code}/test_certificate/2026-11-28 Refrigerant leak test certificate.pdf`
    expect(sha256(files.get(docPath)!)).toBe(doc.sha256)

    // The formats are ours, versioned and described.
    const manifest = JSON.parse(files.get('manifest.json')!.toString('utf8'))
    expect(manifest).toMatchObject({ format: 'startproof-handover', version: 1, scope: { kind: 'project', projectId: s.project.id }, generatedBy: { name: 'Cal Closeout', role: 'contractor' } })
    expect(manifest.reports.map((r: { reportNumber: string }) => r.reportNumber).sort()).toEqual([s.first, s.second].sort())
    expect(manifest.reports.find((r: { reportNumber: string }) => r.reportNumber === s.first).supersededBy).toBe(s.second)
    expect(manifest.closeoutDocuments).toHaveLength(1)
    for (const f of manifest.files as { path: string; sha256: string; sizeBytes: number }[]) {
      expect(files.get(f.path)?.length, f.path).toBe(f.sizeBytes)
      expect(sha256(files.get(f.path)!), f.path).toBe(f.sha256)
    }
    const readme = files.get('README.txt')!.toString('utf8')
    expect(readme).toContain('startproof-handover version 1')
    expect(readme).toContain('sha256sum -c SHA256SUMS')
    expect(readme).toContain('manufacturer')

    const run = JSON.parse(files.get(`runs/${s.first}/run.json`)!.toString('utf8'))
    expect(run).toMatchObject({ format: 'startproof-run', version: 1, reportNumber: s.first, run: { id: s.run.id, state: 'accepted' } })

    const rows = (name: string) => parse(files.get(name)!, { columns: true, bom: true }) as Record<string, string>[]
    const reports = rows('reports.csv')
    expect(reports.map((r) => r.report_number).sort()).toEqual([s.first, s.second].sort())
    expect(reports.find((r) => r.report_number === s.first)).toMatchObject({ equipment_tag: 'CH-7', superseded_by: s.second, technician: 'Ada Tech', pdf_path: `reports/${s.first}.pdf` })
    const readings = rows(`runs/${s.first}/readings.csv`)
    expect(readings.find((r) => r.field_id === 'oilPressureRunning')).toMatchObject({ value: '36', unit: 'psid', verdict: 'pass', not_applicable: 'false' })
    expect(Number(readings.find((r) => r.field_id === 'oilPressureRunning')!.value_si)).toBeCloseTo(36 * 6894.757, 0)
    expect(readings.find((r) => r.field_id === 'oilTempRunning')).toMatchObject({ value: '125', unit: '°F', unit_si: 'K', quantity: 'temperature' })
    // The pre-work safety items are answered; fields of a step set aside carry the step's disposition, as the report counts
    // them: a required one is a not-applicable check, an optional one is not a check at all.
    expect(readings.find((r) => r.field_id === 'safetyBriefing')).toMatchObject({ verdict: 'pass', not_applicable: 'false', answer: 'yes' })
    const skipped = readings.filter((r) => r.step_id !== 'oil-running' && r.step_id !== 'prestart-safety')
    expect(skipped.length).toBeGreaterThan(20)
    for (const r of skipped) {
      expect(r, r.field_id).toMatchObject({ not_applicable: 'true', disposition: 'not_applicable', na_reason: 'Not applicable: Covered by the factory test record' })
      expect(r.verdict, r.field_id).toBe(r.required === 'true' ? 'not_applicable' : 'not_a_check')
    }
    const findings = rows(`runs/${s.first}/findings.csv`)
    expect(findings).toEqual([expect.objectContaining({ severity: 'minor', status: 'open', description: 'Oil sight glass label faded' })])
    const signatures = rows(`runs/${s.first}/signatures.csv`)
    expect(signatures.map((r) => [r.meaning, r.printed_name])).toEqual([['performed_by', 'Ada Tech'], ['accepted_by', 'Olive Owner']])
    expect(rows('closeout.csv')).toEqual([expect.objectContaining({ title: 'Refrigerant leak test certificate', path: docPath, sha256: doc.sha256, category_label: 'Test certificate' })])

    const [audit] = await ctx.db.query(`SELECT after FROM audit_event WHERE action = 'archive.export'`)
    expect(audit.after.reportNumbers.sort()).toEqual([s.first, s.second].sort())
  }, 240_000)

  it('when a selection is exported, then only those reports are in it; unknown or hidden report numbers and bad bodies answer 400 naming the field', async () => {
    const s = await twoReports()
    const res = await s.contractorAgent.post('/api/archive/export').send({ reportNumbers: [s.first] }).buffer(true).parse(binary)
    expect(res.status).toBe(200)
    const files = await unzip(res.body)
    expect([...files.keys()].filter((p) => p.startsWith('reports/'))).toEqual([`reports/${s.first}.pdf`])
    expect(JSON.parse(files.get('manifest.json')!.toString()).scope).toEqual({ kind: 'selection', reportNumbers: [s.first] })

    const cases: [unknown, string][] = [
      [{}, 'projectId'],
      [{ projectId: s.project.id, reportNumbers: [s.first] }, 'projectId'],
      [{ projectId: 'nope' }, 'projectId'],
      [{ reportNumbers: [] }, 'reportNumbers'],
      [{ reportNumbers: [s.first, 'SP-1999-000001'] }, 'reportNumbers[1]'],
      [{ projectId: randomUUID() }, 'projectId'],
    ]
    for (const [body, field] of cases) {
      const bad = await s.contractorAgent.post('/api/archive/export').send(body as object)
      expect(bad.status, JSON.stringify(body)).toBe(400)
      expect(Object.keys(bad.body.error.fields).join(), JSON.stringify(body)).toContain(field)
    }
    const unknownKey = await s.contractorAgent.post('/api/archive/export').send({ projectId: s.project.id, everything: true })
    expect(unknownKey.status).toBe(400)
    expect(unknownKey.body.error.message).toMatch(/everything/)
  }, 240_000)

  it('when someone is not on the project, then no route gives them its reports, documents or package', async () => {
    const s = await twoReports()
    const outsider = await makeUser(ctx.db, s.org, 'contractor')
    const agent = await signedInAgent(ctx.app, outsider)
    expect((await agent.get(`/api/projects/${s.project.id}/handover.zip`)).status).toBe(404)
    const sel = await agent.post('/api/archive/export').send({ reportNumbers: [s.first] })
    expect(sel.status).toBe(400)
    expect(sel.body.error.fields['reportNumbers[0]']).toMatch(/no issued report you can see/)
    expect((await agent.post('/api/archive/export').send({ projectId: s.project.id })).status).toBe(400)
    const facets = (await agent.get('/api/archive/facets').expect(200)).body
    expect(facets).toEqual({ projects: [], equipment: [], templates: [], technicians: [] })
    expect((await agent.get('/api/archive').expect(200)).body.total).toBe(0)
    // The public verify answer by number shows only the public fields.
    const answer = (await agent.get(`/api/verify/${s.first}`).expect(200)).body.answer
    expect(Object.keys(answer.report).sort()).toEqual(['acceptedAt', 'acceptedAtLocal', 'equipmentTag', 'projectName', 'reportNumber', 'verdict'])
    expect(answer).toMatchObject({ fileChecked: false, headline: `${s.first} is an issued report, superseded by ${s.second}` })
    expect(answer.report.acceptedAtLocal).toMatch(/^\d{4}-\d{2}-\d{2} \d{2}:\d{2} C[SD]T$/)
    expect((await agent.get(`/api/verify/${s.first.toLowerCase()}`).expect(200)).body.answer.report.reportNumber).toBe(s.first)

    const mine = (await s.contractorAgent.get('/api/archive/facets').expect(200)).body
    expect(mine.projects).toEqual([expect.objectContaining({ id: s.project.id, reportCount: 2, closed: false })])
    expect(mine.equipment).toEqual([expect.objectContaining({ tag: 'CH-7', reportCount: 2 })])
    expect(mine.technicians).toEqual([expect.objectContaining({ name: 'Ada Tech', active: true, reportCount: 2 })])
  }, 240_000)

  it('when a stored PDF changed on disk, then the package is cut short instead of handing over a wrong file', async () => {
    const s = await twoReports()
    const [{ storage_key: key }] = await ctx.db.query(`SELECT storage_key FROM report WHERE report_number = $1`, [s.first])
    const file = path.join(ctx.config.STORAGE_DIR, key)
    const bytes = fs.readFileSync(file)
    bytes[bytes.length - 10] ^= 0x01
    fs.writeFileSync(file, bytes)
    const outcome = await s.contractorAgent
      .get(`/api/projects/${s.project.id}/handover.zip`)
      .buffer(true)
      .parse(binary)
      .then((res) => unzip(res.body).then(() => 'complete zip', () => 'broken zip'), () => 'aborted')
    expect(outcome).not.toBe('complete zip')
  }, 240_000)
})

describe('retention', () => {
  it('when the technician is deactivated and the project closed, then every report stays listed, downloadable and exportable; nothing can delete them', async () => {
    const s = await twoReports()
    await s.adminAgent.patch(`/api/users/${s.tech.id}`).send({ active: false }).expect(200)
    const closed = await s.adminAgent.post(`/api/projects/${s.project.id}/close`).expect(200)
    expect(closed.body.project.closedAt).toBeTruthy()
    expect((await s.adminAgent.post(`/api/projects/${s.project.id}/close`)).status).toBe(409)
    expect((await s.repAgent.post(`/api/projects/${s.project.id}/close`)).status).toBe(403)

    const list = (await s.contractorAgent.get('/api/archive').expect(200)).body
    expect(list.total).toBe(2)
    expect(list.items.every((i: { projectClosed: boolean; technicianName: string }) => i.projectClosed && i.technicianName === 'Ada Tech')).toBe(true)
    const facets = (await s.contractorAgent.get('/api/archive/facets').expect(200)).body
    expect(facets.technicians).toEqual([expect.objectContaining({ name: 'Ada Tech', active: false })])
    expect(facets.projects[0].closed).toBe(true)
    for (const agent of [s.contractorAgent, s.repAgent, s.adminAgent]) {
      const pdf = await agent.get(list.items[0].downloadUrl).buffer(true).parse(binary)
      expect(pdf.status).toBe(200)
      expect(sha256(pdf.body)).toBe(list.items[0].sha256)
    }
    expect((await s.contractorAgent.get(`/api/projects/${s.project.id}/handover.zip`).buffer(true).parse(binary)).status).toBe(200)
    expect((await s.contractorAgent.get(`/api/verify/${s.second}`).expect(200)).body.answer.outcome).toBe('genuine_current')

    // No new runs on a closed project; reopening allows them again.
    const blocked = await s.adminAgent.get(`/api/projects/${s.project.id}`).expect(200)
    expect(blocked.body.project.closedAt).toBeTruthy()
    const techAgain = await makeUser(ctx.db, s.org, 'technician')
    await s.adminAgent.put(`/api/projects/${s.project.id}/members/${techAgain.id}`).expect(200)
    const techAgent = await signedInAgent(ctx.app, techAgain)
    const refused = await techAgent.post(`/api/equipment/${s.equipment.id}/runs`).send({ templateId: s.template.id })
    expect(refused.status).toBe(409)
    expect(refused.body.error.message).toMatch(/closed/)
    const moreEquipment = await s.adminAgent.post(`/api/projects/${s.project.id}/equipment`).send({ ...chiller, tag: 'CH-8', serialNumber: 'TW-8' })
    expect(moreEquipment.status).toBe(409)
    expect(moreEquipment.body.error.message).toMatch(/closed/)
    await s.adminAgent.post(`/api/projects/${s.project.id}/reopen`).expect(200)
    expect((await techAgent.post(`/api/equipment/${s.equipment.id}/runs`).send({ templateId: s.template.id })).status).toBe(201)

    // Neither the project, its equipment nor a report can be deleted while reports exist.
    expect((await s.adminAgent.delete(`/api/projects/${s.project.id}`)).status).toBe(409)
    await expect(ctx.db.query(`DELETE FROM report WHERE report_number = $1`, [s.first])).rejects.toThrow(/archived/)
    await expect(ctx.db.query(`DELETE FROM equipment WHERE id = $1`, [s.equipment.id])).rejects.toThrow()
  }, 240_000)
})
