// Saving one reading under load: the product's save (`PUT /api/runs/:runId/readings/:fieldId`) against a floor — a
// bare Express 5 + pg server doing one INSERT … ON CONFLICT upsert of the same JSON with a pool of the same size —
// on the same throwaway PostgreSQL cluster, in the same run, driven by the same closed-loop client (each writer
// sends its next save when the previous one is answered, on a run of its own, with a new value every time).
// The machine is shared, so the goals are ratios to the floor measured minutes apart, and the load average is printed.
//
//   npm run bench:save [-- --strict]
//
// Environment: SAVE_BENCH_WRITERS=20,50   writer counts, measured in order (the goals name the first and the last)
//              SAVE_BENCH_SECONDS=15      measured time per target and writer count
//              SAVE_BENCH_WARMUP_SECONDS=3  unmeasured closed loop before each measurement
//              SAVE_BENCH_TIMEOUT_SECONDS=60  a save unanswered this long counts as a network error
//              SAVE_BENCH_PROFILE=dir     V8 CPU profiles of the two servers, written there when they stop
//              SAVE_BENCH_PG_STATS=1      load pg_stat_statements and print the product's costliest statements
//              SAVE_BENCH_DURABLE=0       run PostgreSQL with fsync and synchronous commit off, as the tests do
//                                         (default: on, as the cluster of `npm start` and any real installation has
//                                         them, so every save and every floor upsert waits for its commit to be on disk)
// Besides saves/s and latency it prints the CPU each save cost in the server process and in its PostgreSQL backends
// (from /proc, over the measured window), which is steadier than throughput on a shared machine.
// --strict exits 1 when a goal is missed (otherwise the goals are only printed).
import { spawn, type ChildProcess } from 'node:child_process'
import { randomBytes, randomUUID } from 'node:crypto'
import fs from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import pg from 'pg'
import { request } from 'undici'
import { freePort, startThrowawayCluster, type ThrowawayCluster } from '../server/db/cluster'
import { createDataSource } from '../server/db/data-source'
import { migrateDatabase } from '../server/db/migrate'
import { DEMO_PEOPLE, demoChiller, loadDemoData } from '../server/db/demo-data'
import { closedLoop, quantile, type LoopResult, type Writer } from './lib/closed-loop'
import { FLOOR_AUDIT_TABLE, FLOOR_AUDIT_TABLE_SQL, FLOOR_TABLE, FLOOR_TABLE_SQL } from './lib/floor-table'

const envNumber = (name: string, fallback: number) => {
  const v = process.env[name]
  if (v === undefined || v === '') return fallback
  const n = Number(v)
  if (!Number.isFinite(n) || n <= 0) throw new Error(`${name} must be a positive number, not "${v}"`)
  return n
}
const opts = {
  writers: (process.env.SAVE_BENCH_WRITERS || '20,50').split(',').map((s) => {
    const n = Number(s.trim())
    if (!Number.isInteger(n) || n < 1) throw new Error(`SAVE_BENCH_WRITERS must list whole numbers, not "${s}"`)
    return n
  }),
  seconds: envNumber('SAVE_BENCH_SECONDS', 15),
  warmupSeconds: process.env.SAVE_BENCH_WARMUP_SECONDS === '0' ? 0 : envNumber('SAVE_BENCH_WARMUP_SECONDS', 3),
  timeoutSeconds: envNumber('SAVE_BENCH_TIMEOUT_SECONDS', 60),
  strict: process.argv.includes('--strict'),
  pgStats: process.env.SAVE_BENCH_PG_STATS === '1',
  durable: process.env.SAVE_BENCH_DURABLE !== '0',
}
const maxWriters = Math.max(...opts.writers)

/** The field every writer saves: the running oil pressure, a plain measured number with a unit (shared/library/chiller.ts). */
const FIELD_ID = 'oilPressureRunning'
const FIELD_UNIT = 'psid'
const TEMPLATE_KEY = 'centrifugal-chiller-startup'

const loadavg = () => os.loadavg().map((l) => l.toFixed(2)).join(' ')
const f1 = (x: number) => (Number.isNaN(x) ? '-' : x >= 99.95 ? x.toFixed(0) : x.toFixed(1))
const ratio = (x: number) => (Number.isFinite(x) ? `${x >= 10 ? x.toFixed(0) : x.toFixed(2)}×` : '-')

// ---------------------------------------------------------------------------------------------------------------------
// Everything started here is stopped here, on success, on error and on Ctrl-C.

const children: ChildProcess[] = []
let cluster: ThrowawayCluster | null = null
let tmpRoot: string | null = null
let owner: pg.Client | null = null
let cleaning: Promise<void> | null = null
/** Set on Ctrl-C: what fails after it (requests to a stopping server) is not worth a stack trace. */
let interrupted = false

function cleanup(): Promise<void> {
  cleaning ??= (async () => {
    await owner?.end().catch(() => undefined)
    await Promise.all(children.map(stopChild))
    try {
      cluster?.remove()
    } catch (err) {
      console.error(`Could not stop the benchmark cluster: ${(err as Error).message}`)
    }
    if (tmpRoot) fs.rmSync(tmpRoot, { recursive: true, force: true })
  })()
  return cleaning
}

function stopChild(child: ChildProcess): Promise<void> {
  if (child.exitCode !== null || child.signalCode !== null) return Promise.resolve()
  return new Promise((resolve) => {
    const kill = setTimeout(() => child.kill('SIGKILL'), 10_000)
    child.once('exit', () => {
      clearTimeout(kill)
      resolve()
    })
    child.kill('SIGTERM')
  })
}

for (const signal of ['SIGINT', 'SIGTERM'] as const) {
  process.once(signal, () => {
    interrupted = true
    console.error(`\n${signal}: stopping the servers and the cluster …`)
    void cleanup().finally(() => process.exit(130))
  })
}

/** CPU seconds (user + system) a process has used so far, from /proc; 0 when it is gone or /proc is not there. */
const TICKS_PER_SECOND = 100 // USER_HZ on Linux
function cpuSeconds(pid: number): number {
  try {
    const stat = fs.readFileSync(`/proc/${pid}/stat`, 'utf8')
    const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ')
    return (Number(fields[11]) + Number(fields[12])) / TICKS_PER_SECOND
  } catch {
    return 0
  }
}

/** Starts a TypeScript file of bench/lib as a child process with tsx; resolves with the port it reports over IPC. */
function startChild(name: string, file: string, env: Record<string, string>): Promise<{ child: ChildProcess; port: number }> {
  // SAVE_BENCH_PROFILE=dir writes a V8 CPU profile of each server child there when it stops (for finding where time goes).
  const profile = process.env.SAVE_BENCH_PROFILE ? ['--cpu-prof', '--cpu-prof-dir', path.resolve(process.env.SAVE_BENCH_PROFILE)] : []
  const child = spawn(process.execPath, [...profile, '--import', 'tsx', path.join(import.meta.dirname, 'lib', file)], {
    cwd: path.join(import.meta.dirname, '..'),
    // Only what the child needs: settings from the calling shell (DATABASE_URL, rate limits …) must not leak in.
    env: { PATH: process.env.PATH ?? '', HOME: process.env.HOME ?? os.tmpdir(), ...env },
    stdio: ['ignore', 'pipe', 'pipe', 'ipc'],
  })
  children.push(child)
  const tail: string[] = []
  const relay = (stream: NodeJS.ReadableStream | null) =>
    stream?.on('data', (chunk: Buffer) => {
      for (const line of chunk.toString().split('\n').filter(Boolean)) {
        tail.push(line)
        if (tail.length > 20) tail.shift()
        console.log(`  [${name}] ${line}`)
      }
    })
  relay(child.stdout)
  relay(child.stderr)
  return new Promise((resolve, reject) => {
    const timer = setTimeout(() => reject(new Error(`${name} did not start within 180 s`)), 180_000)
    child.once('message', (m: { port?: number }) => {
      clearTimeout(timer)
      if (typeof m?.port === 'number') resolve({ child, port: m.port })
      else reject(new Error(`${name} sent ${JSON.stringify(m)} instead of its port`))
    })
    child.once('exit', (code, signal) => {
      clearTimeout(timer)
      reject(new Error(`${name} exited (${signal ?? `code ${code}`}) before it was ready:\n${tail.join('\n')}`))
    })
  })
}

// ---------------------------------------------------------------------------------------------------------------------
// The product's public API, as a tablet uses it.

interface Answer<T> { status: number; body: T; cookie: string | null }

async function api<T = Record<string, unknown>>(base: string, method: 'GET' | 'POST' | 'PUT', pathname: string, options: { cookie?: string; body?: unknown } = {}): Promise<Answer<T>> {
  const res = await request(`${base}${pathname}`, {
    method,
    headers: {
      // The server checks that a state-changing request comes from its own pages: the Origin of PUBLIC_URL.
      origin: base,
      ...(options.cookie ? { cookie: options.cookie } : {}),
      ...(options.body !== undefined ? { 'content-type': 'application/json' } : {}),
    },
    body: options.body !== undefined ? JSON.stringify(options.body) : undefined,
  })
  const text = await res.body.text()
  const setCookie = res.headers['set-cookie']
  const first = Array.isArray(setCookie) ? setCookie[0] : setCookie
  return { status: res.statusCode, body: (text ? JSON.parse(text) : {}) as T, cookie: first ? first.split(';')[0] : null }
}

async function expectOk<T>(what: string, answer: Promise<Answer<T>>, status = 200): Promise<Answer<T>> {
  const a = await answer
  if (a.status !== status) throw new Error(`${what}: HTTP ${a.status} ${JSON.stringify(a.body).slice(0, 400)}`)
  return a
}

async function signIn(base: string, email: string, password: string): Promise<string> {
  const a = await expectOk(`sign-in of ${email}`, api(base, 'POST', '/api/session', { body: { email, password } }))
  if (!a.cookie) throw new Error(`sign-in of ${email} set no session cookie`)
  return a.cookie
}

/** The value of save number `seq`: 30.0 … 44.9 psid, never the same twice in a row, so every save changes the reading. */
const valueOf = (seq: number) => Math.round(300 + ((seq * 7) % 150)) / 10
const saveBody = (version: number, seq: number) => JSON.stringify({ changeId: randomUUID(), baseVersion: version, entry: { value: valueOf(seq), unit: FIELD_UNIT } })

interface Lane {
  runId: string
  cookie: string
  version: number
  seq: number
  /** Saves answered 2xx on this lane, warm-ups included: each one bumped the field's version by one. */
  answeredOk: number
}

/** A writer on its own run: it follows the field's version from each answer (a 409 carries the current one). */
function writerFor(lane: Lane, pathname: string, headers: Record<string, string>): Writer {
  return {
    path: pathname,
    headers,
    body: () => saveBody(lane.version, ++lane.seq),
    onAnswer(status, text) {
      try {
        const body = JSON.parse(text) as { reading?: { version?: number }; current?: { version?: number }; duplicate?: boolean }
        if (status < 300 && !body.duplicate) lane.answeredOk += 1
        const v = status < 300 ? body.reading?.version : body.current?.version
        if (typeof v === 'number') lane.version = v
      } catch {
        // Not JSON (a proxy's or a crash's page): keep the version; the answer is already counted.
      }
    },
  }
}

// ---------------------------------------------------------------------------------------------------------------------

interface Cpu { serverMs: number; pgMs: number }
interface Measured { writers: number; floor: LoopResult & { cpu: Cpu }; obliged: LoopResult & { cpu: Cpu }; product: LoopResult & { cpu: Cpu } }

function stats(r: LoopResult) {
  return {
    savesPerSecond: r.ok / r.seconds,
    p50: quantile(r.latencies, 0.5),
    p99: quantile(r.latencies, 0.99),
    errors: r.non2xx + r.network,
  }
}

function printLevel(m: Measured) {
  const head = `  ${'target'.padEnd(11)} ${'saves/s'.padStart(8)} ${'p50 ms'.padStart(8)} ${'p99 ms'.padStart(8)} ${'saves'.padStart(6)} ${'errors'.padStart(6)} ${'5xx'.padStart(5)} ${'network'.padStart(7)} ${'req B'.padStart(6)} ${'resp B'.padStart(7)}  statuses`
  console.log(`\n${m.writers} writers, ${opts.seconds} s each (closed loop; saves still waiting at the end are awaited and counted)`)
  console.log(head)
  console.log(`  ${'-'.repeat(head.length - 2)}`)
  for (const [name, r] of [['floor', m.floor], ['obliged', m.obliged], ['Startproof', m.product]] as const) {
    const s = stats(r)
    const answered = r.latencies.length || 1
    const statuses = [...r.statuses.entries()].sort((a, b) => a[0] - b[0]).map(([code, n]) => `${code}×${n}`).join(' ')
    console.log(
      `  ${name.padEnd(11)} ${f1(s.savesPerSecond).padStart(8)} ${f1(s.p50).padStart(8)} ${f1(s.p99).padStart(8)} ${String(r.ok).padStart(6)} ${String(s.errors).padStart(6)} ${String(r.status5xx).padStart(5)} ${String(r.network).padStart(7)} ${String(Math.round(r.requestBytes / answered)).padStart(6)} ${String(Math.round(r.responseBytes / answered)).padStart(7)}  ${statuses || '-'}  (${r.seconds.toFixed(1)} s)`,
    )
    for (const line of r.samples) console.log(`      ${name}: ${line}`)
  }
  const f = stats(m.floor)
  const p = stats(m.product)
  const o = stats(m.obliged)
  console.log(`  Startproof / floor: saves/s ${ratio(p.savesPerSecond / f.savesPerSecond)}, p99 ${ratio(p.p99 / f.p99)}`)
  console.log(`  obliged floor / floor: saves/s ${ratio(o.savesPerSecond / f.savesPerSecond)}, p99 ${ratio(o.p99 / f.p99)} (the least any signed-in, audited save costs)`)
  console.log(`  Startproof / obliged floor: saves/s ${ratio(p.savesPerSecond / o.savesPerSecond)}, p99 ${ratio(p.p99 / o.p99)}`)
  const c = (x: Cpu) => `server ${x.serverMs.toFixed(2)} ms + PostgreSQL ${x.pgMs.toFixed(2)} ms = ${(x.serverMs + x.pgMs).toFixed(2)} ms`
  const sum = (x: Cpu) => x.serverMs + x.pgMs
  console.log(`  CPU per save: floor ${c(m.floor.cpu)}; obliged ${c(m.obliged.cpu)} (${ratio(sum(m.obliged.cpu) / sum(m.floor.cpu))}); Startproof ${c(m.product.cpu)} (${ratio(sum(m.product.cpu) / sum(m.floor.cpu))})`)
}

async function main() {
  console.log(`Machine: ${os.cpus().length} × ${os.cpus()[0]?.model ?? 'cpu'}, Node ${process.version}`)
  console.log(`Load average before: ${loadavg()}`)

  cluster = await startThrowawayCluster('startproof-bench-save-', 'startproof_bench', {
    durable: opts.durable,
    settings: opts.pgStats ? ['shared_preload_libraries=pg_stat_statements', 'pg_stat_statements.track=all', 'pg_stat_statements.track_planning=on'] : [],
  })
  tmpRoot = fs.mkdtempSync(path.join(os.tmpdir(), 'startproof-bench-save-files-'))
  await migrateDatabase({ migrationUrl: cluster.url, appRole: cluster.appRole })
  owner = new pg.Client({ connectionString: cluster.url, application_name: 'startproof-bench' })
  await owner.connect()
  const [{ server_version: version }] = (await owner.query(`SHOW server_version`)).rows
  const durability = (await owner.query(`SELECT current_setting('fsync') AS fsync, current_setting('synchronous_commit') AS sc`)).rows[0]
  console.log(`PostgreSQL ${version} on 127.0.0.1:${cluster.port} (throwaway; fsync ${durability.fsync}, synchronous_commit ${durability.sc}); migrations applied`)
  // The floor's table is DDL, so the owner makes it; the floor then connects as the application role, as the product does.
  if (opts.pgStats) await owner.query(`CREATE EXTENSION IF NOT EXISTS pg_stat_statements`)
  await owner.query(FLOOR_TABLE_SQL)
  await owner.query(`GRANT SELECT, INSERT, UPDATE ON ${FLOOR_TABLE} TO ${cluster.appRole}`)
  await owner.query(FLOOR_AUDIT_TABLE_SQL)
  await owner.query(`GRANT INSERT ON ${FLOOR_AUDIT_TABLE} TO ${cluster.appRole}`)

  // The demo firm, people, projects and library (no history), loaded as the application role as npm start does.
  const demo = createDataSource(cluster.appUrl, { poolSize: 2 })
  await demo.initialize()
  let t = performance.now()
  await loadDemoData(demo, { history: false })
  await demo.destroy()
  console.log(`Demo data (without history) loaded in ${((performance.now() - t) / 1000).toFixed(1)} s`)

  // The product's pool is the data source's default: startServer builds it without a size.
  const poolSize = (createDataSource(cluster.appUrl).options as { poolSize?: number }).poolSize ?? 10
  const productPort = await freePort()
  const base = `http://127.0.0.1:${productPort}`
  t = performance.now()
  const sessionSecret = randomBytes(32).toString('hex')
  const product = await startChild('product', 'save-product.ts', {
    NODE_ENV: 'production',
    SESSION_SECRET: sessionSecret,
    DATABASE_URL: cluster.appUrl,
    MIGRATION_DATABASE_URL: cluster.url,
    PORT: String(productPort),
    HOST: '127.0.0.1',
    PUBLIC_URL: base,
    CLIENT_DIST: path.join(tmpRoot, 'no-client'),
    STORAGE_DIR: path.join(tmpRoot, 'files'),
    CERT_DIR: path.join(tmpRoot, 'certs'),
    // A web-only process: saving never renders a report, and no Chromium is needed.
    REPORT_WORKER: 'false',
  })
  console.log(`Startproof serving on ${base} (child process, pool ${poolSize}) after ${((performance.now() - t) / 1000).toFixed(1)} s`)
  const floor = await startChild('floor', 'save-floor.ts', { FLOOR_DATABASE_URL: cluster.appUrl, FLOOR_POOL_SIZE: String(poolSize), FLOOR_SESSION_SECRET: sessionSecret })
  const floorBase = `http://127.0.0.1:${floor.port}`
  console.log(`Floor serving on ${floorBase} (child process, Express 5 + pg, pool ${poolSize})`)

  // Equipment of its own for each writer's run, on an open project the technician works on.
  const admin = DEMO_PEOPLE.find((p) => p.role === 'admin' && !p.deactivatedDaysAgo)!
  const technician = DEMO_PEOPLE.find((p) => p.role === 'technician' && !p.deactivatedDaysAgo)!
  const adminCookie = await signIn(base, admin.email, admin.password)
  const techCookie = await signIn(base, technician.email, technician.password)
  const { body: { projects } } = await expectOk('project list', api<{ projects: { id: string; code: string; unitSystem: string; closedAt: string | null }[] }>(base, 'GET', '/api/projects', { cookie: techCookie }))
  const project = projects.find((p) => !p.closedAt && p.unitSystem === 'IP') ?? projects.find((p) => !p.closedAt)
  if (!project) throw new Error(`${technician.displayName} is a member of no open project`)
  const { body: { templates } } = await expectOk('template list', api<{ templates: { id: string; key: string }[] }>(base, 'GET', '/api/templates', { cookie: adminCookie }))
  const template = templates.find((x) => x.key === TEMPLATE_KEY)
  if (!template) throw new Error(`the library has no template "${TEMPLATE_KEY}"`)

  t = performance.now()
  const lanes: Lane[] = []
  for (let i = 1; i <= maxWriters; i++) {
    const n = String(i).padStart(3, '0')
    const item = demoChiller(`CH-B${n}`, `Load-test plant room, bay ${n}`, `LT-${n}`)
    const { body: { equipment } } = await expectOk(`equipment ${item.tag}`, api<{ equipment: { id: string } }>(base, 'POST', `/api/projects/${project.id}/equipment`, { cookie: adminCookie, body: item }), 201)
    // Each writer is a tablet of its own: its own sign-in and session.
    const cookie = i === 1 ? techCookie : await signIn(base, technician.email, technician.password)
    const { body: { run } } = await expectOk(`run on ${item.tag}`, api<{ run: { id: string; definition: { sections: { steps: { fields: { id: string }[] }[] }[] } } }>(base, 'POST', `/api/equipment/${equipment.id}/runs`, { cookie, body: { templateId: template.id } }), 201)
    if (!run.definition.sections.some((s) => s.steps.some((st) => st.fields.some((f) => f.id === FIELD_ID)))) throw new Error(`${TEMPLATE_KEY} has no field ${FIELD_ID}`)
    lanes.push({ runId: run.id, cookie, version: 0, seq: 0, answeredOk: 0 })
  }
  console.log(`${maxWriters} chillers and runs on ${project.code} for ${technician.displayName}, one signed-in session each, in ${((performance.now() - t) / 1000).toFixed(1)} s; every save writes ${FIELD_ID} (${FIELD_UNIT})`)
  const floorLanes: Lane[] = lanes.map(() => ({ runId: randomUUID(), cookie: '', version: 0, seq: 0, answeredOk: 0 }))
  // The obliged floor's writers send the product's session cookies (it checks them against the product's sessions).
  const obligedLanes: Lane[] = lanes.map((l) => ({ runId: randomUUID(), cookie: l.cookie, version: 0, seq: 0, answeredOk: 0 }))

  const productWriters = (n: number) => lanes.slice(0, n).map((l) => writerFor(l, `/api/runs/${l.runId}/readings/${FIELD_ID}`, { origin: base, cookie: l.cookie }))
  const floorWriters = (n: number) => floorLanes.slice(0, n).map((l) => writerFor(l, `/floor/runs/${l.runId}/readings/${FIELD_ID}`, { origin: floorBase }))
  const obligedWriters = (n: number) => obligedLanes.slice(0, n).map((l) => writerFor(l, `/floor-obliged/runs/${l.runId}/readings/${FIELD_ID}`, { origin: floorBase, cookie: l.cookie }))

  // Connections each target holds on PostgreSQL, sampled while it is measured.
  const peakConnections = new Map<string, number>()
  const sampler = setInterval(() => {
    owner
      ?.query(`SELECT application_name AS name, count(*)::int AS n FROM pg_stat_activity WHERE datname = current_database() AND backend_type = 'client backend' GROUP BY 1`)
      .then(({ rows }) => {
        for (const { name, n } of rows as { name: string; n: number }[]) peakConnections.set(name || '(none)', Math.max(n, peakConnections.get(name || '(none)') ?? 0))
      })
      .catch(() => undefined)
  }, 500)

  // The PostgreSQL backends serving a target: the floor's pool, or every connection the product opens (requests,
  // sessions, jobs), but never the benchmark's own.
  const backendsOf = async (target: 'floor' | 'product') =>
    (
      await owner!.query(
        `SELECT pid FROM pg_stat_activity WHERE datname = current_database() AND backend_type = 'client backend'
           AND (CASE WHEN $1 = 'floor' THEN application_name = 'startproof-bench-floor'
                     ELSE application_name LIKE 'startproof%' AND application_name NOT LIKE 'startproof-bench%' END)`,
        [target],
      )
    ).rows.map((r: { pid: number }) => r.pid)
  const cpuOf = async (serverPid: number, target: 'floor' | 'product') => {
    const pids = await backendsOf(target)
    return { server: cpuSeconds(serverPid), backends: new Map(pids.map((pid) => [pid, cpuSeconds(pid)])) }
  }

  const run = async (label: string, target: 'floor' | 'product', origin: string, writers: Writer[]) => {
    const serverPid = (target === 'floor' ? floor : product).child.pid ?? 0
    if (opts.warmupSeconds > 0) await closedLoop(origin, writers, opts.warmupSeconds * 1000, opts.timeoutSeconds * 1000)
    if (opts.pgStats && target === 'product') await owner!.query(`SELECT pg_stat_statements_reset()`)
    const before = await cpuOf(serverPid, target)
    const r = await closedLoop(origin, writers, opts.seconds * 1000, opts.timeoutSeconds * 1000)
    const after = await cpuOf(serverPid, target)
    // A backend opened during the window counts from zero; one closed during it is lost (pools keep theirs under load).
    let pgSeconds = 0
    for (const [pid, s] of after.backends) pgSeconds += s - (before.backends.get(pid) ?? 0)
    const cpu = { serverMs: ((after.server - before.server) * 1000) / Math.max(r.ok, 1), pgMs: (pgSeconds * 1000) / Math.max(r.ok, 1) }
    console.log(`  … ${label}, ${writers.length} writers: ${r.ok} saves in ${r.seconds.toFixed(1)} s; load average ${loadavg()}`)
    if (opts.pgStats && target === 'product') await printStatements(r.ok)
    return { ...r, cpu }
  }
  const printStatements = async (saves: number) => {
    const { rows } = await owner!.query(
      `SELECT calls, total_exec_time + total_plan_time AS total, total_plan_time AS plan, rows, left(regexp_replace(query, '\\s+', ' ', 'g'), 110) AS query
         FROM pg_stat_statements WHERE dbid = (SELECT oid FROM pg_database WHERE datname = current_database())
        ORDER BY 2 DESC LIMIT 12`,
    )
    console.log(`    The product's costliest statements over the window (planning + execution in PostgreSQL, per save):`)
    for (const x of rows as { calls: string; total: number; plan: number; query: string }[])
      console.log(`    ${(x.total / Math.max(saves, 1)).toFixed(3).padStart(7)} ms (plan ${(x.plan / Math.max(saves, 1)).toFixed(3)})  ${(Number(x.calls) / Math.max(saves, 1)).toFixed(2).padStart(5)} calls  ${x.query}`)
  }
  const measured: Measured[] = []
  console.log(`\nMeasuring (warm-up ${opts.warmupSeconds} s before each; time-out ${opts.timeoutSeconds} s) …`)
  for (const n of opts.writers) {
    const floorResult = await run('floor', 'floor', floorBase, floorWriters(n))
    const obligedResult = await run('obliged floor', 'floor', floorBase, obligedWriters(n))
    const productResult = await run('Startproof', 'product', base, productWriters(n))
    measured.push({ writers: n, floor: floorResult, obliged: obligedResult, product: productResult })
  }
  clearInterval(sampler)

  for (const m of measured) printLevel(m)
  console.log(`\nPeak PostgreSQL client connections by application: ${[...peakConnections.entries()].map(([k, v]) => `${k} ${v}`).join(', ')}`)

  // Every save changes the value, so each one applied adds one to the field's version. More versions stored than saves
  // answered 2xx means some saves were kept although their answer was an error (the tablet would send them again).
  const stored = async (sql: string, ids: string[]) => Number((await owner!.query(sql, [ids, FIELD_ID])).rows[0].n ?? 0)
  const storedProduct = await stored(`SELECT sum(version) AS n FROM reading WHERE run_id = ANY($1::uuid[]) AND field_id = $2`, lanes.map((x) => x.runId))
  const storedFloor = await stored(`SELECT sum(version) AS n FROM ${FLOOR_TABLE} WHERE run_id = ANY($1::uuid[]) AND field_id = $2`, floorLanes.map((x) => x.runId))
  const storedObliged = await stored(`SELECT sum(version) AS n FROM ${FLOOR_TABLE} WHERE run_id = ANY($1::uuid[]) AND field_id = $2`, obligedLanes.map((x) => x.runId))
  for (const [name, n, ls] of [['floor', storedFloor, floorLanes], ['obliged floor', storedObliged, obligedLanes], ['Startproof', storedProduct, lanes]] as const) {
    const ok = ls.reduce((a, x) => a + x.answeredOk, 0)
    console.log(`${name}: ${ok} saves answered 2xx (warm-ups included), ${n} stored${n > ok ? ` — ${n - ok} kept although answered with an error` : n < ok ? ` — ${ok - n} answered 2xx but not stored` : ''}`)
  }

  const first = measured[0]
  const last = measured[measured.length - 1]
  const f = stats(first.floor)
  const p = stats(first.product)
  const l = stats(last.product)
  const goals = [
    { ok: p.savesPerSecond >= 0.5 * f.savesPerSecond, text: `${first.writers} writers: saves/s ≥ 0.5× floor`, got: `${f1(p.savesPerSecond)} vs ${f1(f.savesPerSecond)} (${ratio(p.savesPerSecond / f.savesPerSecond)})` },
    { ok: p.p99 <= 2 * f.p99, text: `${first.writers} writers: p99 ≤ 2× floor`, got: `${f1(p.p99)} ms vs ${f1(f.p99)} ms (${ratio(p.p99 / f.p99)})` },
    { ok: l.errors === 0, text: `${last.writers} writers: zero errors`, got: `${l.errors} (${last.product.non2xx} non-2xx, ${last.product.network} network)` },
    { ok: last.product.status5xx === 0, text: `${last.writers} writers: zero 5xx`, got: String(last.product.status5xx) },
  ]
  console.log('\nGoals (Startproof against the floor of this run)')
  for (const g of goals) console.log(`  ${g.ok ? 'met   ' : 'MISSED'}  ${g.text.padEnd(34)} ${g.got}`)
  console.log(`\nLoad average after: ${loadavg()}`)
  return goals.every((g) => g.ok)
}

main()
  .then(async (allMet) => {
    if (interrupted) return
    await cleanup()
    if (!allMet && opts.strict) {
      console.log('A goal was missed (--strict): exit 1')
      process.exit(1)
    }
    process.exit(0)
  })
  .catch(async (err) => {
    if (interrupted) return // the signal handler stops everything and exits 130
    console.error(err)
    await cleanup()
    process.exit(1)
  })
