// Archive query benchmark: a throwaway PostgreSQL cluster on a free loopback port, the real migrations, 100 000 invented
// ready reports with their parents (set-based fill), then ArchiveService.search timed for a mix of queries and users.
// Prints median and p95 per query type and overall, and EXPLAIN (ANALYZE, BUFFERS) of the slowest cases.
//
//   npm run bench:archive -- [--reports=100000] [--projects=500] [--runs=50] [--warmup=5] [--explain=3]
//                            [--try-index[=name,…]] [--keep] [--seed=42]
//
// --try-index measures again after creating candidate indexes in the benchmark database (all of them, or the named
// ones; see CANDIDATE_INDEXES) and prints before/after. --keep leaves the cluster running until Ctrl-C, for psql.
import type { DataSource } from 'typeorm'
import { archiveQuerySchema } from '@shared/schemas/archive'
import type { SessionUser } from '@shared/types/api'
import { startThrowawayCluster } from '../server/db/cluster'
import { createDataSource } from '../server/db/data-source'
import { migrateDatabase } from '../server/db/migrate'
import { ArchiveService } from '../server/services/archive.service'
import { fillArchive } from './lib/archive-fill'

const args = new Map(process.argv.slice(2).map((a) => {
  const [k, v] = a.replace(/^--/, '').split('=')
  return [k, v ?? 'true'] as const
}))
const num = (name: string, fallback: number) => (args.has(name) ? Number(args.get(name)) : fallback)
const opts = {
  reports: num('reports', 100_000),
  projects: num('projects', 500),
  runs: num('runs', 50),
  warmup: num('warmup', 5),
  explain: num('explain', 3),
  seed: num('seed', 42),
  keep: args.has('keep'),
  tryIndex: args.has('try-index') ? (args.get('try-index') === 'true' ? null : args.get('try-index')!.split(',')) : undefined,
}

/**
 * Indexes to try with --try-index (name → SQL), added in the order named. `recent` and `covering` are the ones that paid;
 * migration 1764673200000-ArchiveQueryIndexes now creates them, so they measure nothing new unless that migration changes.
 */
const CANDIDATE_INDEXES: Record<string, string> = {
  // Newest/oldest across many projects: one ordered scan with project_id = ANY(…) as a filter, instead of reading every
  // visible report and sorting. Also serves the keyset condition (accepted_at, id) < (…).
  recent: `CREATE INDEX bench_report_recent_idx ON report (accepted_at DESC, id DESC) WHERE status = 'ready'`,
  // The superseded-by sub-query asks for ready reports only; with status in the index it needs no heap visit per probe.
  superseded: `CREATE INDEX bench_report_superseded_idx ON report (equipment_id, template_id, accepted_at DESC) INCLUDE (report_number) WHERE status = 'ready'`,
  // The existing archive index again, carrying the filter columns so counts with fails / open findings / technician
  // filters are index-only scans instead of a sequential scan of the (wide, tsvector-carrying) heap.
  covering: `DROP INDEX report_archive_idx; CREATE INDEX report_archive_idx ON report (project_id, accepted_at DESC, id) INCLUDE (fail_count, open_finding_count, technician_id, equipment_id, template_id) WHERE status = 'ready'`,
  // The same as a separate index beside the existing one.
  counts: `CREATE INDEX bench_report_counts_idx ON report (project_id) INCLUDE (accepted_at, fail_count, open_finding_count, technician_id, equipment_id, template_id) WHERE status = 'ready'`,
}

const median = (xs: number[]) => quantile(xs, 0.5)
function quantile(xs: number[], q: number) {
  if (!xs.length) return NaN
  const s = [...xs].sort((a, b) => a - b)
  return s[Math.min(s.length - 1, Math.max(0, Math.ceil(q * s.length) - 1))]
}
const f1 = (x: number) => (Number.isNaN(x) ? '-' : x.toFixed(1))

interface Statement { sql: string; params: unknown[]; ms: number }
/** A DataSource stand-in that records the statements the service sends (ArchiveService only calls `query`). */
function recording(db: DataSource) {
  let log: Statement[] = []
  const proxy = {
    async query(sql: string, params?: unknown[]) {
      const t = performance.now()
      const result = await db.query(sql, params)
      log.push({ sql, params: params ?? [], ms: performance.now() - t })
      return result
    },
  } as unknown as DataSource
  return { proxy, take: () => { const l = log; log = []; return l } }
}
const kindOf = (sql: string) => (/count\(\*\)/.test(sql) ? 'count' : /ORDER BY r\.accepted_at/.test(sql) ? 'page' : 'lookup')

interface Case { name: string; user: SessionUser; input: Record<string, unknown> }
interface Result { name: string; times: number[]; count: number[]; page: number[]; rows: number; total: number; statements: Statement[] }

async function measure(service: ArchiveService, rec: ReturnType<typeof recording>, cases: Case[]): Promise<Result[]> {
  const results: Result[] = []
  for (const c of cases) {
    const query = archiveQuerySchema.validateSync(c.input)
    for (let i = 0; i < opts.warmup; i++) await service.search(c.user, query)
    rec.take()
    const r: Result = { name: c.name, times: [], count: [], page: [], rows: 0, total: 0, statements: [] }
    for (let i = 0; i < opts.runs; i++) {
      const t = performance.now()
      const page = await service.search(c.user, query)
      r.times.push(performance.now() - t)
      const statements = rec.take()
      r.count.push(statements.filter((s) => kindOf(s.sql) === 'count').reduce((a, s) => a + s.ms, 0))
      r.page.push(statements.filter((s) => kindOf(s.sql) === 'page').reduce((a, s) => a + s.ms, 0))
      r.rows = page.items.length
      r.total = page.total
      r.statements = statements
    }
    results.push(r)
  }
  return results
}

function printTable(title: string, results: Result[], before?: Result[]) {
  const w = Math.max(...results.map((r) => r.name.length), 10)
  console.log(`\n${title}`)
  const head = `  ${'query'.padEnd(w)}  ${'median'.padStart(7)}  ${'p95'.padStart(7)}  ${'count'.padStart(7)}  ${'page'.padStart(7)}  ${'rows'.padStart(4)}  ${'total'.padStart(6)}${before ? `  ${'p95 before'.padStart(10)}` : ''}`
  console.log(head)
  console.log(`  ${'-'.repeat(head.length - 2)}`)
  for (const r of results) {
    const b = before?.find((x) => x.name === r.name)
    console.log(`  ${r.name.padEnd(w)}  ${f1(median(r.times)).padStart(7)}  ${f1(quantile(r.times, 0.95)).padStart(7)}  ${f1(median(r.count)).padStart(7)}  ${f1(median(r.page)).padStart(7)}  ${String(r.rows).padStart(4)}  ${String(r.total).padStart(6)}${b ? `  ${f1(quantile(b.times, 0.95)).padStart(10)}` : ''}`)
  }
  const all = results.flatMap((r) => r.times)
  console.log(`  ${'overall'.padEnd(w)}  ${f1(median(all)).padStart(7)}  ${f1(quantile(all, 0.95)).padStart(7)}   (ms; count and page are the medians of those two statements; ${opts.runs} runs each after ${opts.warmup} warm-up)`)
}

async function explain(db: DataSource, results: Result[], n: number) {
  const slow = [...results].sort((a, b) => quantile(b.times, 0.95) - quantile(a.times, 0.95)).filter((r, i) => i < n || quantile(r.times, 0.95) > 100)
  for (const r of slow) {
    for (const s of r.statements.filter((x) => kindOf(x.sql) !== 'lookup')) {
      const plan: { 'QUERY PLAN': string }[] = await db.query(`EXPLAIN (ANALYZE, BUFFERS) ${s.sql}`, s.params)
      console.log(`\n--- ${r.name}: ${kindOf(s.sql)} statement (p95 ${f1(quantile(r.times, 0.95))} ms)`)
      // The visible-projects array is hundreds of uuids long; name its length instead.
      console.log(plan.map((p) => p['QUERY PLAN'].replace(/'\{([0-9a-f-]{36},?){3,}\}'/g, (m) => `'{…${m.split(',').length} ids}'`)).join('\n'))
    }
  }
}

async function main() {
  const cluster = await startThrowawayCluster('startproof-bench-archive-', 'startproof_bench')
  const { url, port, dataDir } = cluster
  let db: DataSource | null = null
  process.once('SIGINT', () => { cluster.remove(); process.exit(130) })
  try {
    // As the owner throughout: the fill, VACUUM and the candidate indexes are the administrator's work, not the app's.
    await migrateDatabase({ migrationUrl: url, appRole: cluster.appRole })
    db = createDataSource(url, { poolSize: 2 })
    await db.initialize()
    const [{ server_version: version }] = await db.query(`SHOW server_version`)
    console.log(`PostgreSQL ${version} on 127.0.0.1:${port} (${dataDir}); migrations applied`)

    console.log(`Filling ${opts.reports} ready reports over ${opts.projects} projects …`)
    const t0 = performance.now()
    const qr = db.createQueryRunner()
    const fill = await fillArchive(qr, { reports: opts.reports, projects: opts.projects, seed: opts.seed }, console.log)
    await qr.release()
    const fillSeconds = (performance.now() - t0) / 1000
    const t1 = performance.now()
    await db.query(`VACUUM (ANALYZE)`)
    const vacuumSeconds = (performance.now() - t1) / 1000
    console.log(`Fill ${fillSeconds.toFixed(1)} s, VACUUM (ANALYZE) ${vacuumSeconds.toFixed(1)} s; rows: ${Object.entries(fill.counts).map(([k, v]) => `${k} ${v}`).join(', ')}`)
    const [shape] = await db.query(`
      SELECT pg_size_pretty(pg_total_relation_size('report')) AS report_size, pg_size_pretty(pg_relation_size('report')) AS heap,
             round(100.0 * count(*) FILTER (WHERE fail_count > 0) / count(*), 1) AS pct_fails,
             round(100.0 * count(*) FILTER (WHERE open_finding_count > 0) / count(*), 1) AS pct_open,
             round(100.0 * count(*) FILTER (WHERE marginal_count > 0) / count(*), 1) AS pct_marginal,
             min(accepted_at)::date::text AS first, max(accepted_at)::date::text AS last,
             count(DISTINCT equipment_id) AS equipment_reported,
             (SELECT round(100.0 * count(*) FILTER (WHERE n > 1) / count(*), 1) FROM (SELECT count(*) AS n FROM report GROUP BY equipment_id, template_id) x) AS pct_pairs_retested
        FROM report`)
    console.log(`report: ${shape.report_size} (heap ${shape.heap}); accepted ${shape.first} … ${shape.last}; with fails ${shape.pct_fails} %, marginals ${shape.pct_marginal} %, open findings ${shape.pct_open} %; ${shape.equipment_reported} equipment items reported, ${shape.pct_pairs_retested} % of equipment × checklist pairs re-tested`)

    // The people and ids the queries use.
    const user = async (id: string): Promise<SessionUser> => {
      const [u] = await db!.query(`SELECT id, email, display_name, role FROM app_user WHERE id = $1`, [id])
      return { id: u.id, email: u.email, displayName: u.display_name, role: u.role, organizationName: 'Orlmere Commissioning Services' }
    }
    const admin = await user(fill.adminId)
    const contractor = await user(fill.contractorId)
    const technician = await user(fill.technicianIds[0])
    const [bigProject] = await db.query(`SELECT project_id AS id, count(*)::int AS n FROM report GROUP BY 1 ORDER BY 2 DESC LIMIT 1`)
    const [busyEquipment] = await db.query(`SELECT equipment_id AS id, count(*)::int AS n FROM report GROUP BY 1 ORDER BY 2 DESC LIMIT 1`)
    const [contractorProject] = await db.query(
      `SELECT r.project_id AS id FROM report r JOIN project_member m ON m.project_id = r.project_id AND m.user_id = $1 GROUP BY 1 ORDER BY count(*) DESC LIMIT 1`, [contractor.id])
    const [serial] = await db.query(`SELECT e.serial_number AS s FROM equipment e JOIN report r ON r.equipment_id = e.id GROUP BY 1 ORDER BY count(*) DESC LIMIT 1`)
    const lastYear = new Date(Date.now() - 365 * 86400_000).toISOString().slice(0, 10)
    const today = new Date().toISOString().slice(0, 10)

    const service = (() => {
      const rec = recording(db)
      return { rec, service: new ArchiveService(rec.proxy) }
    })()
    const cursorAfter = async (u: SessionUser, input: Record<string, unknown>, pages: number) => {
      let cursor: string | null = null
      for (let i = 0; i < pages; i++) {
        const page = await service.service.search(u, archiveQuerySchema.validateSync({ ...input, ...(cursor ? { cursor } : {}) }))
        cursor = page.nextCursor
        if (!cursor) throw new Error(`no page ${i + 2} for ${JSON.stringify(input)}`)
      }
      service.rec.take()
      return cursor as string
    }

    const cases: Case[] = [
      { name: 'admin, unfiltered, first page', user: admin, input: {} },
      { name: 'contractor (20 projects), first page', user: contractor, input: {} },
      { name: 'technician (member), first page', user: technician, input: {} },
      { name: `project (largest, ${bigProject.n} reports)`, user: admin, input: { projectId: bigProject.id } },
      { name: 'contractor, one project', user: contractor, input: { projectId: contractorProject.id } },
      { name: `equipment (${busyEquipment.n} reports)`, user: admin, input: { equipmentId: busyEquipment.id } },
      { name: 'technician filter', user: admin, input: { technicianId: technician.id } },
      { name: 'date range (one quarter)', user: admin, input: { from: '2024-04-01', to: '2024-06-30' } },
      { name: 'hasFails', user: admin, input: { hasFails: true } },
      { name: 'hasOpenFindings', user: admin, input: { hasOpenFindings: true } },
      { name: 'text: tag CH-02', user: admin, input: { q: 'CH-02' } },
      { name: 'text: serial number', user: admin, input: { q: serial.s } },
      { name: 'text: "strainer" (notes, findings)', user: admin, input: { q: 'strainer' } },
      { name: 'text: "vibration bearing"', user: contractor, input: { q: 'vibration bearing' } },
      { name: 'contractor: fails+text+last year', user: contractor, input: { hasFails: true, q: 'strainer', from: lastYear, to: today } },
      { name: 'project+technician+open findings', user: admin, input: { projectId: bigProject.id, technicianId: technician.id, hasOpenFindings: true } },
      { name: 'technician+date+no fails', user: admin, input: { technicianId: technician.id, from: '2023-01-01', to: '2023-12-31', hasFails: false } },
      { name: 'contractor: open findings+technician', user: contractor, input: { hasOpenFindings: true, technicianId: technician.id } },
      { name: 'contractor: text matching nothing', user: contractor, input: { q: 'nonexistentword' } },
      { name: 'admin, oldest first', user: admin, input: { sort: 'oldest' } },
      { name: 'admin, page 20 (keyset)', user: admin, input: { cursor: await cursorAfter(admin, {}, 19) } },
      { name: 'contractor, page 20 (keyset)', user: contractor, input: { cursor: await cursorAfter(contractor, {}, 19) } },
      { name: 'admin oldest, page 20 (keyset)', user: admin, input: { sort: 'oldest', cursor: await cursorAfter(admin, { sort: 'oldest' }, 19) } },
      { name: 'hasFails, page 20 (keyset)', user: admin, input: { hasFails: true, cursor: await cursorAfter(admin, { hasFails: true }, 19) } },
    ]

    const before = await measure(service.service, service.rec, cases)
    printTable(`ArchiveService.search over ${opts.reports} reports (fill ${fillSeconds.toFixed(1)} s)`, before)
    if (opts.explain > 0) await explain(db, before, opts.explain)

    if (opts.tryIndex !== undefined) {
      // Cumulative: each named index is added to the ones before it and everything is measured again.
      const names = opts.tryIndex ?? Object.keys(CANDIDATE_INDEXES)
      const applied: string[] = []
      for (const name of names) {
        const sql = CANDIDATE_INDEXES[name]
        if (!sql) throw new Error(`no candidate index "${name}" (have ${Object.keys(CANDIDATE_INDEXES).join(', ')})`)
        console.log(`\n${sql}`)
        await db.query(sql)
        await db.query(`ANALYZE report`)
        applied.push(name)
        const [{ size }] = await db.query(`SELECT pg_size_pretty(pg_relation_size($1)) AS size`, [sql.match(/CREATE INDEX (\w+)/)![1]])
        const after = await measure(service.service, service.rec, cases)
        printTable(`With --try-index=${applied.join(',')} (new index ${size})`, after, before)
        if (opts.explain > 0) await explain(db, after, opts.explain)
      }
    }

    if (opts.keep) {
      console.log(`\nCluster kept running: psql ${url} — Ctrl-C stops it and removes ${dataDir}`)
      await new Promise(() => {})
    }
  } finally {
    await db?.destroy().catch(() => {})
    cluster.remove()
  }
}

main().catch((err) => {
  console.error(err)
  process.exit(1)
})
