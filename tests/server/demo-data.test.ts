import { execFileSync } from 'node:child_process'
import fs from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import request from 'supertest'
import { ReportQueue } from '../../server/jobs/report-queue'
import type { ReportRenderer, ReportService } from '../../server/services/report.service'
import { DEMO_HISTORY, DEMO_PEOPLE, isEmpty, loadDemoData } from '../../server/db/demo-data'
import { countRunRecord, exceptionsOf, localTime, type CheckIndex, type RunSupersedes } from '@shared/record'
import type { RunReview } from '@shared/types/run'
import { Report } from '../../server/entities'
import { buildReportView } from '../../server/reports/view-model'
import { renderReportHtml } from '../../server/reports/render'
import { keep, keptSnapshot, liveSnapshot } from '../../server/services/run-record'
import { cloneDatabase, historyTemplate, testDatabaseUrl } from '../helpers/cluster'
import { asOwner, createTestContext, resetDatabase, type TestContext } from '../helpers/context'

const DATABASE = 'startproof_demo_data'

let ctx: TestContext
let summary: Awaited<ReturnType<typeof loadDemoData>>
let loadedAt: Date

const certDir = fs.mkdtempSync(path.join(os.tmpdir(), 'startproof-demo-certs-'))
const services = () => ctx.services

beforeAll(async () => {
  // loadDemoData with its history, into an empty migrated database (checked there), once per cluster: this file works
  // on a copy of that template (tests/helpers/cluster.ts).
  const template = await historyTemplate()
  ;({ summary, loadedAt } = template)
  if (template.loadSeconds) console.log(`demo data loaded in ${template.loadSeconds.toFixed(1)} s (${summary.runs} runs, ${summary.reports} reports pending)`)
  await cloneDatabase(DATABASE, template.name)
  ctx = await createTestContext({ CERT_DIR: certDir, DATABASE_URL: testDatabaseUrl(DATABASE) })
}, 600_000)
afterAll(async () => {
  await services().renderer.close()
  await ctx.close()
  fs.rmSync(certDir, { recursive: true, force: true })
})

const q = <T = Record<string, unknown>>(sql: string, params: unknown[] = []) => ctx.db.query(sql, params) as Promise<T[]>

describe('demo data', () => {
  it('when loaded into an empty database, then every active demo person signs in and sees their projects and equipment', async () => {
    expect(await isEmpty(ctx.db)).toBe(false)
    const roles = new Set(DEMO_PEOPLE.map((p) => p.role))
    expect([...roles].sort()).toEqual(['admin', 'contractor', 'owner_rep', 'technician'])
    for (const person of DEMO_PEOPLE.filter((p) => p.deactivatedDaysAgo === undefined)) {
      const agent = request.agent(ctx.app)
      await agent.post('/api/session').send({ email: person.email, password: person.password }).expect(200)
      const projects = (await agent.get('/api/projects')).body.projects
      expect(projects.length).toBeGreaterThan(0)
      for (const p of projects) {
        const equipment = await agent.get(`/api/projects/${p.id}/equipment`)
        expect(equipment.status).toBe(200)
        expect(equipment.body.equipment.length).toBe(p.equipmentCount)
      }
    }
    expect(DEMO_PEOPLE.every((p) => p.email.endsWith('.test'))).toBe(true)
  })

  it('when loaded, then at least 50 runs are accepted over about three years, all in the past and in working hours where each project is', async () => {
    const runs = await q<{ state: string; n: number }>(`SELECT state, count(*)::int AS n FROM run GROUP BY state`)
    expect(runs).toEqual([{ state: 'accepted', n: DEMO_HISTORY.length }])
    expect(DEMO_HISTORY.length).toBeGreaterThanOrEqual(50)
    const accepted = await q<{ signed_at: Date; time_zone: string }>(`SELECT signed_at, time_zone FROM signature WHERE meaning = 'accepted_by'`)
    const times = accepted.map((a) => a.signed_at.getTime())
    expect(Math.max(...times)).toBeLessThan(loadedAt.getTime())
    expect((loadedAt.getTime() - Math.min(...times)) / 86_400_000).toBeGreaterThan(2.5 * 365)
    for (const a of accepted) {
      const local = new Intl.DateTimeFormat('en-GB', { timeZone: a.time_zone, hour: 'numeric', hourCycle: 'h23', weekday: 'short' }).formatToParts(a.signed_at)
      const hour = Number(local.find((p) => p.type === 'hour')!.value)
      expect(hour).toBeGreaterThanOrEqual(8)
      expect(hour).toBeLessThan(18)
      expect(['Sat', 'Sun']).not.toContain(local.find((p) => p.type === 'weekday')!.value)
    }
    // Everything the history left behind carries the invented time: nothing but this test's sign-ins has the load time.
    const late = await q<{ n: number }>(
      `SELECT (SELECT count(*) FROM audit_event WHERE occurred_at > $1 AND action NOT LIKE 'session.%')::int
            + (SELECT count(*) FROM reading WHERE updated_at > $1)::int
            + (SELECT count(*) FROM run WHERE updated_at > $1 OR started_at > $1)::int
            + (SELECT count(*) FROM report WHERE created_at > $1)::int AS n`,
      [new Date(loadedAt.getTime() - 3 * 86_400_000)],
    )
    expect(late[0].n).toBe(0)
  })

  it('when loaded, then every run carries a performer and an acceptance signature whose snapshot hash verifies against the data, with the audit trail', async () => {
    const runs = await q<{ id: string }>(`SELECT id FROM run`)
    for (const { id } of runs) {
      const sigs = await q<{ meaning: string; snapshot_sha256: string; printed_name: string; role: string; image_data_url: string; signed_at: Date }>(
        `SELECT meaning, snapshot_sha256, printed_name, role, image_data_url, signed_at FROM signature WHERE run_id = $1 AND NOT voided ORDER BY signed_at`, [id])
      expect(sigs.map((s) => s.meaning)).toEqual(['performed_by', 'accepted_by'])
      const { sha256 } = keep(await liveSnapshot(ctx.db.manager, id))
      for (const s of sigs) {
        expect(s.snapshot_sha256).toBe(sha256)
        expect(s.image_data_url).toMatch(/^data:image\/png;base64,iVBORw0KGgo/)
        expect(s.printed_name.length).toBeGreaterThan(3)
      }
      expect(sigs.map((s) => s.role)).toEqual(['Commissioning technician', "Owner's representative"])
      const actions = (await q<{ action: string; occurred_at: Date }>(`SELECT action, occurred_at FROM audit_event WHERE entity_id = $1 ORDER BY id`, [id]))
      expect(actions.map((a) => a.action)).toEqual(['run.start', 'run.sign_performed', 'run.sign_accepted'])
      expect(actions[2].occurred_at.getTime()).toBe(sigs[1].signed_at.getTime())
    }
    const readingEvents = await q<{ n: number }>(`SELECT count(*)::int AS n FROM audit_event WHERE action = 'reading.set'`)
    expect(readingEvents[0].n).toBeGreaterThan(DEMO_HISTORY.length * 20)
  })

  it('when loaded, then each accepted run has a pending report numbered by its acceptance year with its archive columns filled', async () => {
    const rows = await q<Record<string, unknown>>(
      `SELECT r.status, r.report_number, r.project_id, r.equipment_id, r.template_id, r.technician_id, r.accepted_at, r.fail_count, r.marginal_count,
              r.open_finding_count, r.search IS NOT NULL AS searchable, run.project_id AS run_project, run.equipment_id AS run_equipment,
              s.signed_at AS accepted_signature, p.time_zone
         FROM report r JOIN run ON run.id = r.run_id JOIN project p ON p.id = run.project_id
         JOIN signature s ON s.run_id = run.id AND s.meaning = 'accepted_by'`,
    )
    expect(rows.length).toBe(DEMO_HISTORY.length)
    expect(summary.reports).toBe(DEMO_HISTORY.length)
    for (const r of rows) {
      expect(r).toMatchObject({ status: 'pending', searchable: true, project_id: r.run_project, equipment_id: r.run_equipment })
      expect(r.template_id).toBeTruthy()
      expect(r.technician_id).toBeTruthy()
      expect((r.accepted_at as Date).getTime()).toBe((r.accepted_signature as Date).getTime())
      for (const c of ['fail_count', 'marginal_count', 'open_finding_count']) expect(typeof r[c]).toBe('number')
      const year = new Intl.DateTimeFormat('en-CA', { timeZone: r.time_zone as string, year: 'numeric' }).format(r.accepted_at as Date)
      expect(r.report_number).toMatch(new RegExp(`^SP-${year}-\\d{6}$`))
    }
    // Numbers follow the acceptance dates.
    const ordered = rows.slice().sort((a, b) => (a.accepted_at as Date).getTime() - (b.accepted_at as Date).getTime()).map((r) => (r.report_number as string).slice(-6))
    expect(ordered).toEqual(ordered.slice().sort())
  })

  it('when loaded, then the archive has re-tests superseding earlier reports, a deactivated technician with reports, open findings and a mix of verdicts', async () => {
    const superseded = await q<{ n: number }>(
      `SELECT count(*)::int AS n FROM report a JOIN report b ON b.equipment_id = a.equipment_id AND b.template_id = a.template_id AND b.accepted_at > a.accepted_at`,
    )
    expect(superseded[0].n).toBeGreaterThanOrEqual(5)
    const gone = await q<{ active: boolean; reports: number }>(
      `SELECT u.active, (SELECT count(*)::int FROM report r WHERE r.technician_id = u.id) AS reports FROM app_user u WHERE u.role = 'technician' AND NOT u.active`,
    )
    expect(gone).toHaveLength(1)
    expect(gone[0].reports).toBeGreaterThan(3)
    const mix = await q<{ clean: number; marginal: number; failed: number; open: number }>(
      `SELECT count(*) FILTER (WHERE fail_count = 0 AND marginal_count = 0)::int AS clean,
              count(*) FILTER (WHERE fail_count = 0 AND marginal_count > 0)::int AS marginal,
              count(*) FILTER (WHERE fail_count > 0)::int AS failed,
              count(*) FILTER (WHERE open_finding_count > 0)::int AS open
         FROM report`,
    )
    expect(mix[0].clean).toBeGreaterThan(DEMO_HISTORY.length / 2)
    expect(mix[0].marginal).toBeGreaterThanOrEqual(4)
    expect(mix[0].failed).toBeGreaterThanOrEqual(3)
    expect(mix[0].open).toBeGreaterThanOrEqual(3)
    const findings = await q<{ status: string; n: number }>(`SELECT status, count(*)::int AS n FROM finding GROUP BY status ORDER BY status`)
    expect(findings.map((f) => f.status)).toEqual(['open', 'resolved'])
    const timings = await q<{ n: number }>(`SELECT count(*)::int AS n FROM reading WHERE field_id = 'oilPressureRamp' AND verdict = 'pass'`)
    expect(timings[0].n).toBeGreaterThanOrEqual(3)
    const sent = await q<{ status: string; n: number }>(`SELECT status, count(*)::int AS n FROM outbound_mail GROUP BY status`)
    expect(sent).toEqual([{ status: 'sent', n: expect.any(Number) }])
  })
})

describe('starter library', () => {
  it('when the demo loads, then both starter templates are published as version 1 and a technician can read them', async () => {
    const tech = DEMO_PEOPLE.find((p) => p.role === 'technician')!
    const agent = request.agent(ctx.app)
    await agent.post('/api/session').send({ email: tech.email, password: tech.password }).expect(200)

    const list = await agent.get('/api/templates')
    expect(list.body.templates.map((t: { key: string }) => t.key).sort()).toEqual(['centrifugal-chiller-startup', 'pump-startup'])
    for (const t of list.body.templates) {
      expect(t.latestPublishedNumber).toBe(1)
      const v1 = await agent.get(`/api/templates/${t.id}/versions/1`)
      expect(v1.body.version).toMatchObject({ status: 'published', publishedByName: 'Dana Whitlock' })
      expect(v1.body.version.fieldCount).toBeGreaterThan(5)
    }
  })

  it('when a new organisation exists at start, then it gets the starter library, once', async () => {
    const { ensureStarterLibrary } = await import('../../server/services/starter-library')
    const { makeOrganization } = await import('../helpers/context')
    const org = await makeOrganization(ctx.db, 'A newly added firm')

    const first = await ensureStarterLibrary(ctx.db)
    const second = await ensureStarterLibrary(ctx.db)

    expect(first).toBe(2)
    expect(second).toBe(0)
    const [{ n }] = await ctx.db.query(`SELECT count(*)::int AS n FROM checklist_template WHERE organization_id = $1`, [org.id])
    expect(n).toBe(2)
  })
})

describe('the demo archive at first start', () => {
  it('when the report queue starts, then every demo report is queued behind anything accepted live, and a rendered one prints the back-dated signatures', async () => {
    const queue = new ReportQueue(ctx.config.DATABASE_URL, { work: false })
    await queue.start(services().reports)
    try {
      const [{ n }] = await ctx.db.query(`SELECT count(DISTINCT singleton_key)::int AS n FROM pgboss.job WHERE name = 'report-render' AND state = 'created' AND priority = 0`)
      expect(n).toBe(DEMO_HISTORY.length)
    } finally {
      await queue.stop()
      // Jobs of this database's reports must not reach the queue of a later test file.
      await ctx.db.query(`DELETE FROM pgboss.job WHERE name = 'report-render'`)
    }

    // The oldest report of the superseded chiller at the polytechnic (SI, A4): rendered, sealed and ready.
    const [row] = await ctx.db.query(
      `SELECT r.id, r.report_number FROM report r JOIN equipment e ON e.id = r.equipment_id WHERE e.tag = 'CH-B4-1' ORDER BY r.accepted_at LIMIT 1`,
    )
    const ready = await services().reports.process(row.id)
    expect(ready.status).toBe('ready')
    const file = path.join(certDir, 'demo.pdf')
    fs.writeFileSync(file, await services().reports.pdf(ready))
    const text = execFileSync('pdftotext', ['-layout', file, '-'], { encoding: 'utf8' })
    const sigs: { printed_name: string; signed_at: Date; time_zone: string }[] = await ctx.db.query(
      `SELECT s.printed_name, s.signed_at, s.time_zone FROM signature s JOIN report r ON r.run_id = s.run_id WHERE r.id = $1`, [row.id])
    expect(text).toContain(row.report_number)
    for (const s of sigs) {
      expect(text).toContain(s.printed_name)
      expect(text).toContain(localTime(s.signed_at, s.time_zone).slice(0, 16))
    }
    expect(text).toContain('CH-B4-1')
  }, 120_000)
})

describe('one count everywhere (shared/record/counting.ts)', () => {
  it('when every demo run is counted, then the shared rule, the review, the archive row, the report view and the rendered report agree', async () => {
    const owner = DEMO_PEOPLE.find((p) => p.role === 'admin')!
    const agent = request.agent(ctx.app)
    await agent.post('/api/session').send({ email: owner.email, password: owner.password }).expect(200)
    const rows = await q<{ id: string; run_id: string; fail_count: number; marginal_count: number; snapshot_sha256: string }>(`SELECT id, run_id, fail_count, marginal_count, snapshot_sha256 FROM report`)
    expect(rows.length).toBe(DEMO_HISTORY.length)
    const seen = { exceptions: 0, byOthers: 0, carriedOver: 0, deferred: 0, notDone: 0, recorded: 0 }
    for (const row of rows) {
      const { snapshot } = await keptSnapshot(ctx.db.manager, row.run_id, row.snapshot_sha256)
      const count = countRunRecord(snapshot)
      const t = count.totals
      // The review the signers saw.
      const review = (await agent.get(`/api/runs/${row.run_id}/review`).expect(200)).body.review as RunReview
      expect(review.counts).toEqual(t)
      // The archive row, copied at issue.
      expect([row.fail_count, row.marginal_count]).toEqual([t.fail, t.marginal])
      // The report: cover, summary table, every detail table and the design table, from the same input the PDF is drawn from.
      const report = await ctx.db.getRepository(Report).findOneByOrFail({ id: row.id })
      const input = await services().reports.buildInput(report)
      const view = buildReportView(input)
      expect(view.totalChecks).toBe(t.checks)
      expect(Object.fromEntries(view.counts.map((c) => [c.word, c.count]))).toMatchObject({ Pass: t.pass, Marginal: t.marginal, Fail: t.fail, Incomplete: t.incomplete, Recorded: t.recorded })
      const rowsOf = [...view.sections.flatMap((s) => s.steps.flatMap((st) => st.fields)), ...view.handoverTasks]
      const tally = (key: string) => rowsOf.filter((r) => r.verdict?.key === key).length
      expect({ pass: tally('pass'), marginal: tally('marginal'), fail: tally('fail'), incomplete: tally('incomplete'), recorded: tally('recorded') }).toEqual({ pass: t.pass, marginal: t.marginal, fail: t.fail, incomplete: t.incomplete, recorded: t.recorded })
      // Set-aside rows: every check with a disposition prints as set aside (optional fields of a set-aside step too, though they are not checks).
      const setAside = rowsOf.filter((r) => r.notApplicable)
      expect(setAside.filter((r) => count.results.get(r.id)?.outcome !== null).length).toBe(t.notApplicable + t.byOthers + t.verifiedEarlier + t.deferred + t.notDone)
      expect(setAside.every((r) => r.verdict === null && count.results.get(r.id)?.disposition)).toBe(true)
      expect(view.problems.length).toBe(t.fail + t.marginal)
      expect(view.missing.length).toBe(t.incomplete)
      // A design-table row of a set-aside reading never says "Incomplete"; its verdict is the checklist row's.
      for (const d of view.designRows) {
        const rowOf = rowsOf.find((r) => r.label === d.measuredLabel)
        if (rowOf) expect(d.verdict?.key ?? null).toBe(rowOf.verdict?.key ?? null)
      }
      const html = renderReportHtml(input)
      expect(html).toContain(view.totalsLine)
      // Every marginal or fail is followed up: a finding, a justification, or an acknowledged exception.
      expect(html).not.toMatch(/<td>\s*—\s*<\/td>\s*<\/tr>/)
      const exceptions = exceptionsOf(snapshot, count)
      if (exceptions.length) expect(html).toContain(`Accepted with ${exceptions.length} exception${exceptions.length === 1 ? '' : 's'}`)
      seen.exceptions += exceptions.length ? 1 : 0
      seen.byOthers += t.byOthers
      seen.carriedOver += t.verifiedEarlier
      seen.deferred += t.deferred
      seen.notDone += t.notDone
      seen.recorded += t.recorded
    }
    // The demo's history uses the dispositions it describes and has reports accepted with exceptions.
    expect(seen.exceptions).toBeGreaterThanOrEqual(3)
    expect(seen.byOthers).toBeGreaterThan(0)
    expect(seen.carriedOver).toBeGreaterThan(0)
    expect(seen.deferred).toBeGreaterThan(0)
    expect(seen.notDone).toBeGreaterThan(0)
    expect(seen.recorded).toBeGreaterThan(0)
  }, 300_000)

  it('when three reports are printed (one with exceptions, a re-test, an SI report), then the PDF text carries the same counts', async () => {
    const picks = await q<{ id: string; run_id: string; snapshot_sha256: string }>(
      `(SELECT r.id, r.run_id, r.snapshot_sha256 FROM report r JOIN signature s ON s.run_id = r.run_id AND s.meaning = 'accepted_by' AND NOT s.voided
         WHERE jsonb_array_length(coalesce(s.acknowledged_exceptions, '[]'::jsonb)) > 0 ORDER BY r.report_number LIMIT 1)
       UNION ALL
       (SELECT r.id, r.run_id, r.snapshot_sha256 FROM report r JOIN run_step st ON st.run_id = r.run_id AND st.disposition ->> 'kind' = 'verified_earlier' ORDER BY r.report_number LIMIT 1)
       UNION ALL
       (SELECT r.id, r.run_id, r.snapshot_sha256 FROM report r JOIN project p ON p.id = r.project_id AND p.unit_system = 'SI' ORDER BY r.report_number LIMIT 1)`,
    )
    expect(picks.length).toBe(3)
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'startproof-counted-'))
    for (const pick of picks) {
      const ready = await services().reports.process(pick.id)
      expect(ready.status).toBe('ready')
      const file = path.join(dir, `${pick.id}.pdf`)
      fs.writeFileSync(file, await services().reports.pdf(ready))
      // To look at the pages: KEEP_REPORT_PDFS=/some/folder npm test, then pdftoppm each PDF there.
      if (process.env.KEEP_REPORT_PDFS) fs.copyFileSync(file, path.join(process.env.KEEP_REPORT_PDFS, `${ready.reportNumber}.pdf`))
      const text = execFileSync('pdftotext', [file, '-'], { encoding: 'utf8' }).replace(/\s+/g, ' ')
      const { snapshot } = await keptSnapshot(ctx.db.manager, pick.run_id, pick.snapshot_sha256)
      const t = countRunRecord(snapshot).totals
      expect(text).toContain(`Of ${t.checks} checks: ${t.pass} pass, ${t.marginal} marginal, ${t.fail} fail, ${t.incomplete} incomplete, ${t.recorded} recorded`)
      const ex = exceptionsOf(snapshot)
      if (ex.length) expect(text).toContain(`Accepted with ${ex.length} exception`)
    }
    fs.rmSync(dir, { recursive: true, force: true })
  }, 300_000)
})

describe('supersession by check in the demo history (shared/record/supersession.ts)', () => {
  it('when a chiller was re-tested twice, the second citing the first, then the covers, Verify and the archive say which checks each superseded', async () => {
    const chain = await q<{ id: string; report_number: string; supersedes: RunSupersedes & { words: string | null }; check_index: CheckIndex }>(
      `SELECT r.id, r.report_number, r.supersedes, r.check_index FROM report r WHERE r.project_code = 'VXH-CUP' AND r.equipment_tag = 'CH-2' ORDER BY r.accepted_at`,
    )
    expect(chain).toHaveLength(3)
    const [base, first, second] = chain
    // The first report of the machine supersedes nothing and carries nothing over: its cover has no re-test panel.
    expect(base.supersedes).toMatchObject({ earlier: 0, supersedes: [], carried: [], words: null })
    // Each re-test was kept, at acceptance, with what it superseded.
    expect(first.supersedes.supersedes.map((x) => x.reportNumber)).toEqual([base.report_number])
    // Everything it carried over is on the baseline: performed there, or (the first start) recorded there as done by others.
    expect(first.supersedes.carried.every((c) => c.reportNumber === base.report_number && c.problem === null && c.citedAs.length === 0)).toBe(true)
    expect(first.supersedes.carried.map((c) => c.byOthers).sort()).toEqual([false, true])
    expect(first.supersedes.carried.reduce((n, c) => n + c.checks, 0)).toBe(Object.keys(first.check_index.carried).length)
    expect(first.supersedes.words).toContain(`where they were recorded as done by others`)
    // The second re-test cites the first for every carried check; those the first had carried over are cited back to the baseline.
    expect(new Set(Object.values(second.check_index.carried))).toEqual(new Set([first.report_number]))
    const back = second.supersedes.carried.find((c) => c.reportNumber === base.report_number)
    expect(back).toMatchObject({ citedAs: [first.report_number], problem: null })
    expect(back!.checks).toBeGreaterThan(0)
    expect(second.supersedes.carried.find((c) => c.reportNumber === first.report_number)?.checks ?? 0).toBeGreaterThan(0)
    expect(second.supersedes.words).toContain(`carried over from ${base.report_number} (cited as ${first.report_number}, which carried them over in turn)`)
    // Every demo re-test says something on its cover; every report that carries nothing and has no earlier report, nothing.
    const all = await q<{ supersedes: RunSupersedes & { words: string | null } }>(`SELECT supersedes FROM report`)
    for (const r of all) expect(r.supersedes.words === null).toBe(r.supersedes.earlier === 0 && r.supersedes.carried.length === 0)

    for (const r of chain) expect((await services().reports.process(r.id)).status).toBe('ready')
    const verify = async (n: string) => (await request(ctx.app).get(`/api/verify/${n}`).expect(200)).body.answer
    const [a, b, c] = [await verify(base.report_number), await verify(first.report_number), await verify(second.report_number)]
    // The baseline performed checks neither re-test repeated (they carried them over): it is partly superseded, not superseded.
    expect(a.outcome).toBe('genuine_partly_superseded')
    expect(a.supersession.by.map((x: { reportNumber: string }) => x.reportNumber)).toEqual([first.report_number, second.report_number])
    expect(a.headline).toMatch(new RegExp(`^${base.report_number} is an issued report; partly superseded: \\d+ of ${base.check_index.performed.length} checks re-tested in ${first.report_number} and ${second.report_number}$`))
    expect(b.outcome).toBe('genuine_partly_superseded')
    expect(c).toMatchObject({ outcome: 'genuine_current', supersession: { state: 'current', performed: second.check_index.performed.length } })
    expect(c.reasons.join(' ')).toContain(`carried over from ${base.report_number} (cited as ${first.report_number}`)

    // The second re-test's PDF prints its re-test panel (line breaks after a hyphen joined again).
    const row = await ctx.db.getRepository(Report).findOneByOrFail({ id: second.id })
    const file = path.join(certDir, 'retest.pdf')
    fs.writeFileSync(file, await services().reports.pdf(row))
    const text = execFileSync('pdftotext', [file, '-'], { encoding: 'utf8' }).replace(/\s+/g, ' ').replace(/-\s+/g, '-')
    // The panel's heading is printed in capitals; its words are those kept with the report at acceptance.
    expect(text).toContain(`RE-TEST ${second.supersedes.words}`)
  }, 120_000)
})

describe('loading as one step', () => {
  it('when the load fails half way, then nothing of it is left (the next start loads it again)', async () => {
    await resetDatabase(ctx.db)
    // The database refuses the sixth report, as a crash half way through the history would.
    await asOwner(async (owner) => {
      await owner.query(`CREATE FUNCTION demo_test_refuse_report() RETURNS trigger LANGUAGE plpgsql AS $$
        BEGIN IF (SELECT count(*) FROM report) >= 5 THEN RAISE EXCEPTION 'refused for the test'; END IF; RETURN NEW; END $$`)
      await owner.query(`CREATE TRIGGER demo_test_refuse_report BEFORE INSERT ON report FOR EACH ROW EXECUTE FUNCTION demo_test_refuse_report()`)
    }, ctx.db)
    try {
      await expect(loadDemoData(ctx.db)).rejects.toThrow(/refused for the test/)
    } finally {
      await asOwner(async (owner) => {
        await owner.query(`DROP TRIGGER demo_test_refuse_report ON report`)
        await owner.query(`DROP FUNCTION demo_test_refuse_report`)
      }, ctx.db)
    }
    expect(await isEmpty(ctx.db)).toBe(true)
    const [{ n }] = await ctx.db.query(`SELECT (SELECT count(*) FROM run) + (SELECT count(*) FROM audit_event) + (SELECT count(*) FROM project) + (SELECT count(*) FROM outbound_mail) AS n`)
    expect(Number(n)).toBe(0)
  }, 600_000)
})
