// Handover package export: loads the demo data (three years of accepted runs) into a throwaway cluster, renders and seals
// its reports, then downloads every project's handover package through the real HTTP route — once read as fast as
// possible and once by a slow client — sampling the server's memory, to show the ZIP is streamed and not built in
// memory. Run: npm run bench:export [-- --slow-mbps 4]
import fs from 'node:fs'
import http from 'node:http'
import os from 'node:os'
import path from 'node:path'
import type { AddressInfo } from 'node:net'
import { loadConfig } from '../server/config'
import { createApp } from '../server/app'
import { createAppServices } from '../server/services'
import { startThrowawayCluster } from '../server/db/cluster'
import { createDataSource } from '../server/db/data-source'
import { migrateDatabase } from '../server/db/migrate'
import { DEMO_PEOPLE, loadDemoData } from '../server/db/demo-data'
import type { ReportRenderer, ReportService } from '../server/services/report.service'

const arg = (name: string, fallback: number) => {
  const i = process.argv.indexOf(`--${name}`)
  return i > 0 ? Number(process.argv[i + 1]) : fallback
}
const slowMbps = arg('slow-mbps', 4)
const mb = (bytes: number) => `${(bytes / 1024 / 1024).toFixed(1)} MB`

/** Samples this process's resident memory every 20 ms until stopped; returns the peak above the level at the start. */
function sampleMemory() {
  const base = process.memoryUsage().rss
  let peak = base
  const timer = setInterval(() => {
    peak = Math.max(peak, process.memoryUsage().rss)
  }, 20)
  return () => {
    clearInterval(timer)
    return Math.max(0, peak - base)
  }
}

/** GETs a URL, reading at most `bytesPerSecond` (0 = as fast as it comes); returns size, time to first byte and total time. */
function download(url: string, cookie: string, bytesPerSecond = 0): Promise<{ status: number; bytes: number; firstByteMs: number; totalMs: number }> {
  return new Promise((resolve, reject) => {
    const t0 = performance.now()
    let first = 0
    let bytes = 0
    http
      .get(url, { headers: { cookie } }, (res) => {
        res.on('data', (chunk: Buffer) => {
          if (!first) first = performance.now() - t0
          bytes += chunk.length
          if (bytesPerSecond) {
            res.pause()
            setTimeout(() => res.resume(), (chunk.length / bytesPerSecond) * 1000)
          }
        })
        res.on('end', () => resolve({ status: res.statusCode ?? 0, bytes, firstByteMs: first, totalMs: performance.now() - t0 }))
        res.on('error', reject)
      })
      .on('error', reject)
  })
}

async function main() {
  const cluster = await startThrowawayCluster('startproof-bench-export-', 'startproof_bench')
  const root = fs.mkdtempSync(path.join(os.tmpdir(), 'startproof-bench-export-files-'))
  // The app and the demo load connect as the application role, as a server does; the owner only migrates.
  const db = createDataSource(cluster.appUrl, { poolSize: 4 })
  let server: http.Server | null = null
  let renderer: ReportRenderer | null = null
  try {
    await migrateDatabase({ migrationUrl: cluster.url, appRole: cluster.appRole })
    await db.initialize()
    let t = performance.now()
    await loadDemoData(db)
    console.log(`Demo data loaded in ${((performance.now() - t) / 1000).toFixed(1)} s`)

    const config = loadConfig({ NODE_ENV: 'test', DATABASE_URL: cluster.appUrl, CLIENT_DIST: '/nonexistent', STORAGE_DIR: path.join(root, 'files'), CERT_DIR: path.join(root, 'certs') })
    const services = createAppServices(config, db)
    const app = createApp({ config, db, services })
    renderer = services.renderer
    const pending = await services.reports.pendingIds()
    t = performance.now()
    for (const id of pending) await services.reports.process(id)
    console.log(`${pending.length} reports rendered and sealed in ${((performance.now() - t) / 1000).toFixed(1)} s`)

    server = app.listen(0, '127.0.0.1')
    await new Promise((r) => server!.once('listening', r))
    const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`
    const admin = DEMO_PEOPLE.find((p) => p.role === 'admin')!
    const signIn = await fetch(`${base}/api/session`, { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email: admin.email, password: admin.password }) })
    const cookie = (signIn.headers.get('set-cookie') ?? '').split(';')[0]
    const facets = (await (await fetch(`${base}/api/archive/facets`, { headers: { cookie } })).json()) as { projects: { id: string; code: string; reportCount: number }[] }

    console.log(`\n  ${'project'.padEnd(10)} ${'reports'.padStart(7)} ${'zip'.padStart(9)} ${'reader'.padStart(9)} ${'1st byte'.padStart(9)} ${'total'.padStart(8)} ${'peak RSS +'.padStart(11)}`)
    const rows: { zip: number; peak: number; slow: boolean }[] = []
    for (const project of facets.projects.sort((a, b) => b.reportCount - a.reportCount)) {
      for (const rate of [0, slowMbps * 1024 * 1024]) {
        global.gc?.()
        const stop = sampleMemory()
        const r = await download(`${base}/api/projects/${project.id}/handover.zip`, cookie, rate)
        const peak = stop()
        if (r.status !== 200) throw new Error(`${project.code}: HTTP ${r.status}`)
        rows.push({ zip: r.bytes, peak, slow: rate > 0 })
        console.log(
          `  ${project.code.padEnd(10)} ${String(project.reportCount).padStart(7)} ${mb(r.bytes).padStart(9)} ${(rate ? `${slowMbps} MB/s` : 'fast').padStart(9)} ${`${r.firstByteMs.toFixed(0)} ms`.padStart(9)} ${`${(r.totalMs / 1000).toFixed(2)} s`.padStart(8)} ${mb(peak).padStart(11)}`,
        )
      }
    }
    const biggest = rows.filter((r) => r.slow).sort((a, b) => b.zip - a.zip)[0]
    console.log(`\nLargest package ${mb(biggest.zip)} read slowly: the server's resident memory rose at most ${mb(biggest.peak)} (the ZIP is streamed entry by entry, at most one stored file and 4 MB queued).`)
    console.log(`Machine: ${os.cpus().length} × ${os.cpus()[0]?.model ?? 'cpu'}, load average ${os.loadavg().map((l) => l.toFixed(1)).join(' ')}`)
  } finally {
    server?.close()
    await renderer?.close()
    await db.destroy().catch(() => undefined)
    cluster.remove()
    fs.rmSync(root, { recursive: true, force: true })
  }
}

main().catch((err) => {
  console.error(err)
  process.exit(1)
})
