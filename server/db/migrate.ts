import path from 'node:path'
import { fileURLToPath } from 'node:url'
import pg from 'pg'
import PgBoss from 'pg-boss'
import { QUEUE, QUEUE_OPTIONS } from '../jobs/report-queue'
import { ConfigError, loadConfig, type Config } from '../config'
import { createDataSource } from './data-source'

/** Where pg-boss keeps its tables (the report queue uses the same name). */
export const PGBOSS_SCHEMA = 'pgboss'
/** TypeORM's record of applied migrations: the application may read it, only the owner writes it. */
const MIGRATIONS_TABLE = 'migrations'
/**
 * One key for every migrate step of the product. Advisory locks are scoped to the database, so two databases on one
 * server never wait for each other; two servers starting at once on the same database take turns.
 */
const MIGRATE_LOCK_KEY = '7316540221904883001'

export interface MigrateOptions {
  /** The owner's connection: it creates and alters the tables. */
  migrationUrl: string
  /**
   * The role the application connects as, granted row rights on every table after the migrations; null when the
   * application connects as the owner itself (then there is nothing to grant).
   */
  appRole: string | null
  /** The variable the address came from, for messages. */
  urlName?: string
  log?: (line: string) => void
}

export interface MigrateResult {
  /** Names of the migrations this call applied (empty when another call had applied them, or none were pending). */
  applied: string[]
  /** Whether the application role's rights were (re)applied. */
  granted: boolean
  /** What is still wrong with the application role's rights, in words (also printed). */
  warnings: string[]
}

/** The migrate step's target from the configuration: MIGRATION_DATABASE_URL when set, else DATABASE_URL itself. */
export function migrationTarget(config: Pick<Config, 'DATABASE_URL' | 'MIGRATION_DATABASE_URL'>): Required<Pick<MigrateOptions, 'migrationUrl' | 'appRole' | 'urlName'>> {
  if (!config.MIGRATION_DATABASE_URL) return { migrationUrl: config.DATABASE_URL, appRole: null, urlName: 'DATABASE_URL' }
  const user = (url: string) => decodeURIComponent(new URL(url).username)
  const app = user(config.DATABASE_URL)
  return {
    migrationUrl: config.MIGRATION_DATABASE_URL,
    appRole: app && app !== user(config.MIGRATION_DATABASE_URL) ? app : null,
    urlName: 'MIGRATION_DATABASE_URL',
  }
}

export function redactUrl(value: string): string {
  try {
    const url = new URL(value)
    if (url.password) url.password = '***'
    return url.toString()
  } catch {
    return '(not a URL)'
  }
}

const ident = (name: string) => `"${name.replace(/"/g, '""')}"`

/**
 * Brings the database to the code's shape as its owner, then gives the application role exactly the rights the
 * product needs: the TypeORM migrations (each in its own transaction), pg-boss's schema and the report queue's
 * partition (both DDL the application may not run), and the grants, all under one advisory lock so that servers
 * starting together migrate once. The grants are applied again on every call, so a table a later migration adds is
 * covered as soon as it exists.
 */
export async function migrateDatabase(options: MigrateOptions): Promise<MigrateResult> {
  const { migrationUrl, appRole, urlName = 'MIGRATION_DATABASE_URL', log = () => undefined } = options
  const lock = new pg.Client({ connectionString: migrationUrl, application_name: 'startproof-migrate', connectionTimeoutMillis: 5000 })
  // A connection lost while migrating must reject the step, not crash the process through an unhandled 'error' event.
  lock.on('error', (err) => console.error('migrate:', err.message))
  try {
    await lock.connect()
  } catch (err) {
    throw new Error(`Cannot connect to the database at ${urlName}=${redactUrl(migrationUrl)}: ${(err as Error).message}`)
  }
  try {
    const [{ got }] = (await lock.query(`SELECT pg_try_advisory_lock($1::bigint) AS got`, [MIGRATE_LOCK_KEY])).rows
    if (!got) {
      log('another process is migrating this database; waiting for it')
      await lock.query(`SELECT pg_advisory_lock($1::bigint)`, [MIGRATE_LOCK_KEY])
    }
    try {
      const applied = await runMigrations(migrationUrl).catch((err) => {
        if ((err as { code?: string }).code !== '42501') throw err
        throw new Error(
          `The role of ${urlName} may not change the database's tables (${(err as Error).message}). Migrations run as ` +
            `the tables' owner: set MIGRATION_DATABASE_URL to the owner's connection (README.md, "PostgreSQL roles").`,
        )
      })
      if (applied.length) log(`applied migrations: ${applied.join(', ')}`)
      await preparePgBoss(migrationUrl)
      if (!appRole) return { applied, granted: false, warnings: [] }
      const warnings = await grantAppRole(lock, appRole)
      for (const w of warnings) console.warn(`Database roles: ${w}`)
      return { applied, granted: true, warnings }
    } finally {
      await lock.query(`SELECT pg_advisory_unlock($1::bigint)`, [MIGRATE_LOCK_KEY]).catch(() => undefined)
    }
  } finally {
    await lock.end().catch(() => undefined)
  }
}

async function runMigrations(url: string): Promise<string[]> {
  const db = createDataSource(url, { poolSize: 1, applicationName: 'startproof-migrate' })
  await db.initialize()
  try {
    return (await db.runMigrations({ transaction: 'each' })).map((m) => m.name)
  } finally {
    await db.destroy()
  }
}

/**
 * pg-boss creates its schema, migrates it between its versions and adds a partition table per queue, all DDL. That is
 * done here as the owner; the application's pg-boss starts with `migrate: false` and only reads and writes rows.
 * The queue's settings are written each time so a change to them reaches a database made before it.
 */
async function preparePgBoss(url: string): Promise<void> {
  const boss = new PgBoss({
    connectionString: url,
    schema: PGBOSS_SCHEMA,
    application_name: 'startproof-migrate',
    max: 1,
    migrate: true,
    supervise: false,
    schedule: false,
  })
  let failure: Error | null = null
  boss.on('error', (err: Error) => { failure = err })
  await boss.start()
  try {
    await boss.createQueue(QUEUE, { name: QUEUE, ...QUEUE_OPTIONS })
    await boss.updateQueue(QUEUE, { name: QUEUE, ...QUEUE_OPTIONS })
  } finally {
    await boss.stop({ graceful: false, close: true })
  }
  if (failure) throw failure
}

/**
 * Rows only: SELECT, INSERT, UPDATE and DELETE on the tables, the sequences' nextval, EXECUTE on the product's
 * functions. No TRUNCATE, no TRIGGER, no REFERENCES, no CREATE in the schemas, and no ownership, so the role cannot
 * disable or drop the triggers that keep signed records, truncate a table, or alter one. The append-only tables keep
 * UPDATE and DELETE on purpose: their triggers refuse the changes with the record's own reason, and the tables that
 * allow a narrow change (a signature voided once, a pending report made ready) need UPDATE.
 */
async function grantAppRole(client: pg.Client, appRole: string): Promise<string[]> {
  const role = (await client.query(
    `SELECT r.rolsuper, r.rolcreaterole, r.rolcreatedb, r.rolbypassrls, current_user AS owner,
            pg_has_role(r.oid, current_user, 'MEMBER') AS member_of_owner
       FROM pg_roles r WHERE r.rolname = $1`,
    [appRole],
  )).rows[0] as { rolsuper: boolean; rolcreaterole: boolean; rolcreatedb: boolean; rolbypassrls: boolean; owner: string; member_of_owner: boolean } | undefined
  if (!role) {
    throw new Error(
      `The application role "${appRole}" (the user of DATABASE_URL) does not exist on this PostgreSQL server. Create it ` +
        `as described in README.md, "PostgreSQL roles" (CREATE ROLE ${ident(appRole)} LOGIN PASSWORD '…').`,
    )
  }
  const warnings: string[] = []
  if (role.owner === appRole) return ['DATABASE_URL and MIGRATION_DATABASE_URL name the same role; nothing to grant']

  const r = ident(appRole)
  await client.query('BEGIN')
  try {
    for (const schema of ['public', PGBOSS_SCHEMA].map(ident)) {
      await client.query(`GRANT USAGE ON SCHEMA ${schema} TO ${r}`)
      await client.query(`REVOKE CREATE ON SCHEMA ${schema} FROM ${r}`)
      await client.query(`GRANT SELECT, INSERT, UPDATE, DELETE ON ALL TABLES IN SCHEMA ${schema} TO ${r}`)
      await client.query(`REVOKE TRUNCATE, REFERENCES, TRIGGER ON ALL TABLES IN SCHEMA ${schema} FROM ${r}`)
      await client.query(`GRANT USAGE, SELECT, UPDATE ON ALL SEQUENCES IN SCHEMA ${schema} TO ${r}`)
    }
    await client.query(`REVOKE INSERT, UPDATE, DELETE ON TABLE public.${ident(MIGRATIONS_TABLE)} FROM ${r}`)
    await client.query(`GRANT EXECUTE ON ALL FUNCTIONS IN SCHEMA public TO ${r}`)
    // Before PostgreSQL 15 every role could create objects in `public`; the product's roles never need to but the owner.
    await client.query(`REVOKE CREATE ON SCHEMA public FROM PUBLIC`)
    await client.query('COMMIT')
  } catch (err) {
    await client.query('ROLLBACK').catch(() => undefined)
    throw err
  }

  if (role.rolsuper) warnings.push(`"${appRole}" is a superuser: it can disable the triggers that keep signed records; give the application an ordinary role`)
  if (role.member_of_owner) warnings.push(`"${appRole}" is a member of the owner "${role.owner}" and has its rights (REVOKE ${ident(role.owner)} FROM ${r})`)
  if (role.rolcreaterole) warnings.push(`"${appRole}" may create roles (ALTER ROLE ${r} NOCREATEROLE)`)
  if (role.rolcreatedb) warnings.push(`"${appRole}" may create databases (ALTER ROLE ${r} NOCREATEDB)`)
  const owned = (await client.query(
    `SELECT n.nspname || '.' || c.relname AS name FROM pg_class c JOIN pg_namespace n ON n.oid = c.relnamespace
      WHERE n.nspname = ANY($2) AND c.relowner = (SELECT oid FROM pg_roles WHERE rolname = $1) ORDER BY 1`,
    [appRole, ['public', PGBOSS_SCHEMA]],
  )).rows.map((row) => row.name as string)
  if (owned.length) warnings.push(`"${appRole}" owns ${owned.slice(0, 5).join(', ')}${owned.length > 5 ? ` and ${owned.length - 5} more` : ''}; an owner can disable their triggers (REASSIGN OWNED BY ${r} TO ${ident(role.owner)})`)
  const creates = (await client.query(
    `SELECT has_schema_privilege($1, 'public', 'CREATE') AS public_create, has_database_privilege($1, current_database(), 'CREATE') AS db_create`,
    [appRole],
  )).rows[0]
  if (creates.public_create) warnings.push(`"${appRole}" may still create objects in schema public (through a role it belongs to)`)
  if (creates.db_create) warnings.push(`"${appRole}" may create schemas in this database (REVOKE CREATE ON DATABASE … FROM ${r})`)
  return warnings
}

/**
 * `npx tsx server/db/migrate.ts`: the migrate step alone, with the server's variables (DATABASE_URL for the
 * application role, MIGRATION_DATABASE_URL for the owner), e.g. as a release step before servers start that are given
 * DATABASE_URL only. A server started on a migrated database without MIGRATION_DATABASE_URL finds nothing to change.
 */
async function main(): Promise<void> {
  let config: Config
  try {
    config = loadConfig()
  } catch (err) {
    if (!(err instanceof ConfigError)) throw err
    console.error(err.message)
    process.exit(2)
  }
  const target = migrationTarget(config)
  const { applied, granted } = await migrateDatabase({ ...target, log: (line) => console.log(line) })
  console.log(`migrate: ${applied.length} migration${applied.length === 1 ? '' : 's'} applied; ${granted ? `rights of "${target.appRole}" applied` : 'no application role to grant (MIGRATION_DATABASE_URL unset or the same role)'}`)
}

if (process.argv[1] && path.resolve(process.argv[1]) === fileURLToPath(import.meta.url)) {
  main().catch((err) => {
    console.error(`migrate: ${(err as Error).message}`)
    process.exit(1)
  })
}
