import { execFileSync, spawnSync } from 'node:child_process'
import fs from 'node:fs'
import net from 'node:net'
import os from 'node:os'
import path from 'node:path'

/**
 * A PostgreSQL cluster of the project's own, from Debian's packages, on 127.0.0.1 only.
 * Used by `npm start` (persistent, under data/) and by the tests (throwaway, fsync off).
 * PostgreSQL refuses to run as root, so as root every server command runs as the `postgres` user.
 */
export interface ClusterOptions {
  dataDir: string
  port: number
  logFile: string
  /** Throwaway clusters trade durability for speed (fsync and synchronous commit off); never for real data. */
  throwaway?: boolean
  /** A throwaway cluster that keeps PostgreSQL's durable defaults anyway (a benchmark measuring commits as deployed). */
  durable?: boolean
  /** More server settings, each as `name=value` (a benchmark's extensions, for one). */
  settings?: string[]
}

const isRoot = () => typeof process.getuid === 'function' && process.getuid() === 0
export const CLUSTER_USER = 'postgres'
/** The cluster's own superuser: it owns the databases and every table, and runs the migrations. */
export const DB_SUPERUSER = 'startproof'
/** The role the application connects as: rows only, no ownership (see server/db/migrate.ts for its grants). */
export const DB_APP_ROLE = 'startproof_app'

export class ClusterError extends Error {
  constructor(message: string) {
    super(message)
    this.name = 'ClusterError'
  }
}

/** Finds Debian's PostgreSQL server binaries (`/usr/lib/postgresql/<major>/bin`), newest major first. */
export function findPostgresBin(): string | null {
  if (process.env.PG_BIN && fs.existsSync(path.join(process.env.PG_BIN, 'initdb'))) return process.env.PG_BIN
  const root = '/usr/lib/postgresql'
  if (!fs.existsSync(root)) return null
  const majors = fs
    .readdirSync(root)
    .filter((d) => fs.existsSync(path.join(root, d, 'bin', 'initdb')))
    .sort((a, b) => Number(b) - Number(a))
  return majors.length ? path.join(root, majors[0], 'bin') : null
}

/** Installs Debian's PostgreSQL server when it is missing (root only); returns the bin folder. */
export function ensurePostgresInstalled(log: (line: string) => void = console.log): string {
  const found = findPostgresBin()
  if (found) return found
  if (!isRoot()) {
    throw new ClusterError(
      'PostgreSQL server binaries were not found under /usr/lib/postgresql. Install them with ' +
        '`sudo apt-get install -y postgresql`, or set DATABASE_URL to a PostgreSQL server you run.',
    )
  }
  log('PostgreSQL server is not installed; installing Debian package "postgresql" (apt-get) …')
  const env = { ...process.env, DEBIAN_FRONTEND: 'noninteractive' }
  for (const args of [['update'], ['install', '-y', '--no-install-recommends', 'postgresql']]) {
    const r = spawnSync('apt-get', args, { stdio: 'inherit', env })
    if (r.status !== 0) throw new ClusterError(`apt-get ${args.join(' ')} failed (exit ${r.status}).`)
  }
  const bin = findPostgresBin()
  if (!bin) throw new ClusterError('apt-get installed "postgresql" but no initdb was found under /usr/lib/postgresql.')
  return bin
}

function ensureClusterUser(): void {
  if (!isRoot()) return
  const r = spawnSync('id', ['-u', CLUSTER_USER])
  if (r.status === 0) return
  execFileSync('useradd', ['--system', '--no-create-home', '--shell', '/usr/sbin/nologin', CLUSTER_USER])
}

/** Runs a PostgreSQL program, as the `postgres` user when we are root. */
function runPg(bin: string, program: string, args: string[], options: { allowFail?: boolean } = {}) {
  const exe = path.join(bin, program)
  const [cmd, argv] = isRoot() ? ['runuser', ['-u', CLUSTER_USER, '--', exe, ...args]] : [exe, args]
  const r = spawnSync(cmd, argv, { encoding: 'utf8', cwd: os.tmpdir() })
  if (r.status !== 0 && !options.allowFail) {
    throw new ClusterError(`${program} ${args.join(' ')} failed (exit ${r.status}):\n${r.stderr || r.stdout}`)
  }
  return r
}

/** Whether the cluster user can reach and write `dir` (every parent must be traversable). */
function clusterUserCanUse(dir: string): boolean {
  if (!isRoot()) return true
  return spawnSync('runuser', ['-u', CLUSTER_USER, '--', 'test', '-w', dir, '-a', '-x', dir]).status === 0
}

/**
 * Prepares the folder that will hold the cluster: creates it, hands it to the cluster user, and checks
 * that user can reach it. Returns the folder to use, or throws with the reason.
 */
export class UnreachableDirError extends ClusterError {}

export function prepareClusterDir(dir: string): string {
  fs.mkdirSync(dir, { recursive: true, mode: 0o700 })
  if (isRoot()) {
    ensureClusterUser()
    execFileSync('chown', [CLUSTER_USER, dir])
    if (!clusterUserCanUse(dir)) {
      throw new UnreachableDirError(
        `The PostgreSQL user "${CLUSTER_USER}" cannot reach ${dir}: one of its parent folders is not ` +
          'traversable (for example a project under /root). Set STARTPROOF_DATA_DIR to a folder it can reach, ' +
          'or run `chmod o+x` on the parent folders.',
      )
    }
  }
  return dir
}

export function isInitialized(dataDir: string): boolean {
  return fs.existsSync(path.join(dataDir, 'PG_VERSION'))
}

/** initdb with trust auth on loopback only (the server never listens elsewhere). */
export function initCluster(bin: string, dataDir: string): void {
  runPg(bin, 'initdb', ['-D', dataDir, '-U', DB_SUPERUSER, '--auth=trust', '-E', 'UTF8', '--locale=C.UTF-8'])
}

export function isRunning(bin: string, dataDir: string): boolean {
  return runPg(bin, 'pg_ctl', ['-D', dataDir, 'status'], { allowFail: true }).status === 0
}

export function startCluster(bin: string, opts: ClusterOptions): void {
  const settings = [
    '-c listen_addresses=127.0.0.1',
    `-p ${opts.port}`,
    "-c unix_socket_directories=''",
    ...(opts.throwaway && !opts.durable ? ['-c fsync=off', '-c synchronous_commit=off', '-c full_page_writes=off'] : []),
    ...(opts.settings ?? []).map((x) => `-c ${x}`),
  ].join(' ')
  fs.mkdirSync(path.dirname(opts.logFile), { recursive: true })
  if (isRoot()) {
    fs.closeSync(fs.openSync(opts.logFile, 'a'))
    execFileSync('chown', [CLUSTER_USER, opts.logFile])
  }
  const r = runPg(bin, 'pg_ctl', ['-D', opts.dataDir, '-l', opts.logFile, '-w', '-t', '30', '-o', settings, 'start'], {
    allowFail: true,
  })
  if (r.status !== 0) {
    const tail = fs.existsSync(opts.logFile) ? fs.readFileSync(opts.logFile, 'utf8').split('\n').slice(-15).join('\n') : ''
    throw new ClusterError(`PostgreSQL did not start on 127.0.0.1:${opts.port}.\n${r.stderr || r.stdout}\n${tail}`)
  }
}

export function stopCluster(bin: string, dataDir: string, mode: 'fast' | 'immediate' = 'fast'): void {
  if (!isRunning(bin, dataDir)) return
  runPg(bin, 'pg_ctl', ['-D', dataDir, '-m', mode, '-w', '-t', '30', 'stop'])
}

/** Creates `database` if it does not exist yet. */
export function ensureDatabase(bin: string, port: number, database: string): void {
  const r = runPg(bin, 'psql', ['-h', '127.0.0.1', '-p', String(port), '-U', DB_SUPERUSER, '-d', 'postgres', '-tAc',
    `SELECT 1 FROM pg_database WHERE datname = '${database.replace(/'/g, "''")}'`])
  if (r.stdout.trim() === '1') return
  runPg(bin, 'createdb', ['-h', '127.0.0.1', '-p', String(port), '-U', DB_SUPERUSER, database])
}

/** The owner's address (migrations, demo data, tests' clean-up). */
export function databaseUrl(port: number, database: string): string {
  return `postgres://${DB_SUPERUSER}@127.0.0.1:${port}/${database}`
}

/** The application role's address on the same database. */
export function appDatabaseUrl(port: number, database: string): string {
  return `postgres://${DB_APP_ROLE}@127.0.0.1:${port}/${database}`
}

/**
 * Creates the application role on the cluster if it is missing: it may log in and nothing else (no superuser, no
 * CREATEDB, no CREATEROLE). The cluster trusts loopback, so it needs no password here; its table rights are granted
 * per database by the migrate step. Roles are cluster-wide, so one call serves every database of the cluster.
 */
export function ensureAppRole(bin: string, port: number, role: string = DB_APP_ROLE): void {
  if (!/^[a-z_][a-z0-9_]*$/.test(role)) throw new ClusterError(`"${role}" is not a plain role name`)
  runPg(bin, 'psql', ['-h', '127.0.0.1', '-p', String(port), '-U', DB_SUPERUSER, '-d', 'postgres', '-v', 'ON_ERROR_STOP=1', '-tAc',
    `DO $$ BEGIN
       IF NOT EXISTS (SELECT 1 FROM pg_roles WHERE rolname = '${role}') THEN
         CREATE ROLE ${role} LOGIN NOSUPERUSER NOCREATEDB NOCREATEROLE NOREPLICATION NOBYPASSRLS;
       END IF;
     END $$`])
}

/** A TCP port on 127.0.0.1 that nothing listens on right now. */
export function freePort(): Promise<number> {
  return new Promise((resolve, reject) => {
    const server = net.createServer()
    server.unref()
    server.on('error', reject)
    server.listen(0, '127.0.0.1', () => {
      const { port } = server.address() as net.AddressInfo
      server.close(() => resolve(port))
    })
  })
}

/** Whether something already accepts connections on 127.0.0.1:port. */
export function portInUse(port: number): Promise<boolean> {
  return new Promise((resolve) => {
    const socket = net.connect({ host: '127.0.0.1', port })
    socket.once('connect', () => { socket.destroy(); resolve(true) })
    socket.once('error', () => resolve(false))
  })
}

export interface ThrowawayCluster {
  bin: string
  dataDir: string
  port: number
  logFile: string
  /** The owner (the cluster's superuser): migrations and anything a test or benchmark does behind the app's back. */
  url: string
  /** The application role on the same database: what a server process connects as. */
  appUrl: string
  appRole: string
  /** Stops the server and removes its folder. */
  remove(): void
}

export interface ThrowawayOptions {
  /** More server settings, each as `name=value`. */
  settings?: string[]
  /**
   * Keep fsync, synchronous commit and full-page writes on, as the cluster of `npm start` has them: for a benchmark
   * whose answer depends on what a commit costs. Off by default (the tests do not need their data to survive a crash).
   */
  durable?: boolean
}

/**
 * A throwaway cluster in a new temporary folder on a free loopback port, with `database` and the application role
 * created in it, for the tests and the benchmarks. Never for real data (fsync is off unless `durable`). The caller
 * migrates.
 */
export async function startThrowawayCluster(prefix: string, database: string, { settings = [], durable = false }: ThrowawayOptions = {}): Promise<ThrowawayCluster> {
  const bin = ensurePostgresInstalled()
  const root = fs.mkdtempSync(path.join(os.tmpdir(), prefix))
  fs.chmodSync(root, 0o755)
  const dataDir = prepareClusterDir(path.join(root, 'pg'))
  const logFile = path.join(root, 'postgres.log')
  const port = await freePort()
  const remove = () => {
    try {
      stopCluster(bin, dataDir, 'immediate')
    } finally {
      fs.rmSync(root, { recursive: true, force: true })
    }
  }
  try {
    initCluster(bin, dataDir)
    startCluster(bin, { dataDir, port, logFile, throwaway: true, durable, settings })
    ensureDatabase(bin, port, database)
    ensureAppRole(bin, port)
  } catch (err) {
    remove()
    throw err
  }
  return { bin, dataDir, port, logFile, url: databaseUrl(port, database), appUrl: appDatabaseUrl(port, database), appRole: DB_APP_ROLE, remove }
}
