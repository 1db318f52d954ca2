/**
 * `npm start` (and `npm run dev` with --dev): a local PostgreSQL of the project's own on 127.0.0.1,
 * migrations, demo data on an empty database, the client built when its sources changed, then the server.
 * The local cluster has two roles: its superuser owns the tables and runs the migrations and the demo load, and the
 * server connects as the application role (rows only; see server/db/migrate.ts). With DATABASE_URL set, the local
 * cluster is skipped and that database is used as it is (MIGRATION_DATABASE_URL, when set, for the migrations).
 */
import { spawn, spawnSync, type ChildProcess } from 'node:child_process'
import { createHash } from 'node:crypto'
import fs from 'node:fs'
import path from 'node:path'
import { ConfigError, loadConfig } from '../server/config'
import {
  appDatabaseUrl,
  databaseUrl,
  ensureAppRole,
  ensureDatabase,
  ensurePostgresInstalled,
  initCluster,
  isInitialized,
  isRunning,
  portInUse,
  prepareClusterDir,
  startCluster,
  stopCluster,
  UnreachableDirError,
} from '../server/db/cluster'
import { createDataSource } from '../server/db/data-source'
import { migrateDatabase, migrationTarget, type MigrateOptions } from '../server/db/migrate'
import { isEmpty, loadDemoData } from '../server/db/demo-data'
import { startServer, type RunningServer } from '../server/index'
import { startSmtpCapture } from '../server/mail/smtp-capture'

const root = path.resolve(import.meta.dirname, '..')
const dev = process.argv.includes('--dev')
const log = (line: string) => console.log(`[startproof] ${line}`)

interface LocalCluster {
  bin: string
  dataDir: string
  startedHere: boolean
}

/**
 * The cluster lives in data/ of the checkout. When the checkout sits where the unprivileged PostgreSQL user
 * cannot reach (a clone under /root, say), it moves to a folder of its own under /var/lib, named after the checkout.
 */
function clusterFolder(): { base: string; dataDir: string } {
  const chosen = process.env.STARTPROOF_DATA_DIR
  const prepare = (base: string) => {
    fs.mkdirSync(base, { recursive: true })
    fs.chmodSync(base, 0o755)
    return { base, dataDir: prepareClusterDir(path.join(base, 'postgres')) }
  }
  try {
    return prepare(path.resolve(chosen ?? path.join(root, 'data')))
  } catch (err) {
    if (chosen || !(err instanceof UnreachableDirError)) throw err
    const fallback = path.join('/var/lib/startproof', createHash('sha256').update(root).digest('hex').slice(0, 12))
    log(`${err.message.split(':')[0]}; keeping the database in ${fallback} instead (STARTPROOF_DATA_DIR chooses another folder)`)
    return prepare(fallback)
  }
}

async function prepareLocalCluster(): Promise<{ url: string; ownerUrl: string; cluster: LocalCluster }> {
  const bin = ensurePostgresInstalled(log)
  const port = Number(process.env.STARTPROOF_PG_PORT ?? 54329)
  if (!Number.isInteger(port) || port < 1024 || port > 65535) throw new ConfigError([`STARTPROOF_PG_PORT must be a port number between 1024 and 65535 (got "${process.env.STARTPROOF_PG_PORT}")`])
  const { base, dataDir } = clusterFolder()
  const logFile = path.join(base, 'postgres.log')
  if (!isInitialized(dataDir)) {
    log(`creating a PostgreSQL cluster in ${dataDir}`)
    initCluster(bin, dataDir)
  }
  let startedHere = false
  if (isRunning(bin, dataDir)) {
    log(`reusing the PostgreSQL cluster already running from ${dataDir}`)
  } else {
    if (await portInUse(port)) {
      throw new ConfigError([`port ${port} on 127.0.0.1 is taken by another program; set STARTPROOF_PG_PORT to a free port`])
    }
    startCluster(bin, { dataDir, port, logFile })
    startedHere = true
    log(`PostgreSQL is running on 127.0.0.1:${port} (log: ${logFile.startsWith(root) ? path.relative(root, logFile) : logFile})`)
  }
  ensureDatabase(bin, port, 'startproof')
  ensureAppRole(bin, port)
  process.env.STORAGE_DIR ??= path.join(base, 'files')
  process.env.CERT_DIR ??= path.join(base, 'certs')
  return { url: appDatabaseUrl(port, 'startproof'), ownerUrl: databaseUrl(port, 'startproof'), cluster: { bin, dataDir, startedHere } }
}

/** Migrations and the application role's grants, then the demo data on an empty database, all as the owner. */
async function migrateAndSeed(target: Pick<MigrateOptions, 'migrationUrl' | 'appRole' | 'urlName'>): Promise<void> {
  const { granted } = await migrateDatabase({ ...target, log })
  if (granted) log(`the server connects as "${target.appRole}" (rows only); migrations run as the owner`)
  const db = createDataSource(target.migrationUrl, { poolSize: 2 })
  try {
    await db.initialize()
  } catch (err) {
    throw new Error(`Cannot connect to the database (${(err as Error).message}). Check ${target.urlName}.`)
  }
  try {
    if (await isEmpty(db)) {
      await loadDemoData(db)
      log('loaded the demo data (accounts are listed in README.md)')
    }
  } finally {
    await db.destroy()
  }
}

function newestMtime(entries: string[]): number {
  let newest = 0
  for (const entry of entries) {
    const full = path.join(root, entry)
    if (!fs.existsSync(full)) continue
    const stat = fs.statSync(full)
    if (stat.isFile()) newest = Math.max(newest, stat.mtimeMs)
    else for (const f of fs.readdirSync(full, { recursive: true, withFileTypes: true })) {
      if (f.isFile()) newest = Math.max(newest, fs.statSync(path.join(f.parentPath, f.name)).mtimeMs)
    }
  }
  return newest
}

/** Builds the client with Vite unless dist/ is newer than every source it is made from. */
function buildClientIfStale(distDir: string): void {
  const stamp = path.join(distDir, 'index.html')
  const sources = newestMtime(['client', 'shared', 'index.html', 'vite.config.ts', 'package-lock.json', 'fonts'])
  if (fs.existsSync(stamp) && fs.statSync(stamp).mtimeMs >= sources) {
    log('client build is up to date')
    return
  }
  log('building the client (vite build) …')
  const r = spawnSync(path.join(root, 'node_modules/.bin/vite'), ['build', '--outDir', distDir, '--emptyOutDir', '--logLevel', 'warn'], {
    cwd: root,
    stdio: 'inherit',
  })
  if (r.status !== 0) throw new Error(`vite build failed (exit ${r.status})`)
}

/**
 * Reports need Debian's Chromium and the Verify page's seal check uses poppler's pdfsig: install them when missing
 * (as root, like PostgreSQL); otherwise say what is missing, and the product still runs without them.
 */
function ensureReportTools(): void {
  const missing = [
    ['chromium', process.env.CHROMIUM_PATH ?? '/usr/bin/chromium'],
    ['poppler-utils', '/usr/bin/pdfsig'],
  ].filter(([, file]) => !fs.existsSync(file))
  if (!missing.length) return
  const names = missing.map(([name]) => name)
  if (typeof process.getuid !== 'function' || process.getuid() !== 0) {
    log(`missing ${names.join(' and ')}: reports cannot be rendered until they are installed (sudo apt-get install -y ${names.join(' ')})`)
    return
  }
  log(`installing ${names.join(' and ')} (apt-get) for the handover reports …`)
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' }
  for (const args of [['update', '-qq'], ['install', '-y', '-qq', ...names]]) {
    const r = spawnSync('apt-get', args, { stdio: 'inherit', env })
    if (r.status !== 0) {
      log(`apt-get ${args.join(' ')} failed (exit ${r.status}); reports will say why they cannot be rendered`)
      return
    }
  }
}

async function main() {
  const external = Boolean(process.env.DATABASE_URL)
  ensureReportTools()
  const { url, ownerUrl, cluster } = external
    ? { url: process.env.DATABASE_URL!, ownerUrl: process.env.MIGRATION_DATABASE_URL, cluster: null }
    : await prepareLocalCluster()
  // Without a mail relay configured, mail goes to a capture server on loopback; the Outbox page shows what was sent.
  let capture: Awaited<ReturnType<typeof startSmtpCapture>> | null = null
  if (!process.env.SMTP_URL) {
    capture = await startSmtpCapture(Number(process.env.SMTP_CAPTURE_PORT ?? 0))
    process.env.SMTP_URL = capture.url
    log(`mail is captured locally on ${capture.url} (set SMTP_URL to send through a real relay)`)
  }
  const config = loadConfig({ ...process.env, DATABASE_URL: url, MIGRATION_DATABASE_URL: ownerUrl, ...(dev ? { PORT: process.env.API_PORT ?? '3001' } : {}) })
  await migrateAndSeed(migrationTarget(config))

  let server: RunningServer | null = null
  const children: ChildProcess[] = []
  let stopping = false
  const stop = async (signal: string) => {
    if (stopping) return
    stopping = true
    log(`${signal}: stopping …`)
    const within = (p: Promise<unknown> | undefined, ms: number) => Promise.race([p?.catch((err) => console.error(err)), new Promise((r) => setTimeout(r, ms))])
    try {
      for (const child of children) child.kill('SIGTERM')
      await within(server?.close(), 15_000)
      await within(capture?.close(), 3_000)
    } finally {
      // The database goes down last and always, whatever happened above.
      if (cluster?.startedHere) {
        try {
          stopCluster(cluster.bin, cluster.dataDir, 'fast')
          log('PostgreSQL stopped')
        } catch (err) {
          console.error(`[startproof] PostgreSQL did not stop cleanly: ${(err as Error).message}`)
        }
      }
      process.exit(0)
    }
  }
  process.on('SIGINT', () => void stop('SIGINT'))
  process.on('SIGTERM', () => void stop('SIGTERM'))

  if (dev) {
    const env = { ...process.env, DATABASE_URL: url, ...(ownerUrl ? { MIGRATION_DATABASE_URL: ownerUrl } : {}), PORT: String(config.PORT), NODE_ENV: 'development' }
    children.push(spawn(path.join(root, 'node_modules/.bin/tsx'), ['watch', '--clear-screen=false', 'server/index.ts'], { cwd: root, env, stdio: 'inherit' }))
    children.push(spawn(path.join(root, 'node_modules/.bin/vite'), [], { cwd: root, env: { ...env, API_PORT: String(config.PORT) }, stdio: 'inherit' }))
    log(`dev: API on http://localhost:${config.PORT}, client with hot reload on http://localhost:5173`)
    for (const child of children) child.on('exit', (code) => void stop(`a dev process exited (${code})`))
    return
  }

  buildClientIfStale(path.resolve(root, config.CLIENT_DIST))
  server = await startServer(config)
  log(`Startproof is ready on ${server.url} — Ctrl-C stops the server and the database`)
}

main().catch((err) => {
  console.error(err instanceof ConfigError ? err.message : `[startproof] ${err instanceof Error ? err.message : String(err)}`)
  process.exit(1)
})
