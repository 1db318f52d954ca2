import pg from 'pg'
import { inject } from 'vitest'
import { appDatabaseUrl, databaseUrl } from '../../server/db/cluster'
import { createDataSource } from '../../server/db/data-source'
import { isEmpty, loadDemoData, type DemoLoadSummary } from '../../server/db/demo-data'
import { DEMO_TEMPLATE, HISTORY_TEMPLATE, MIGRATED_TEMPLATE, TEST_DATABASE, type TestCluster } from '../setup/databases'

export { DEMO_TEMPLATE, HISTORY_TEMPLATE, MIGRATED_TEMPLATE, TEST_DATABASE }

/**
 * This worker's throwaway cluster. Test files run in parallel, one per worker at a time, and each worker has a cluster
 * of its own (tests/setup/postgres.ts), so files in one worker share its `startproof_test` database as they always did
 * (each empties it with `resetDatabase()`), and a test that stops PostgreSQL stops only its own worker's.
 */
export function testCluster(): TestCluster {
  const clusters = inject('clusters')
  const poolId = Number(process.env.VITEST_POOL_ID ?? 1)
  return clusters[(Math.max(1, poolId) - 1) % clusters.length]
}

/** The application role's address: what the app, its services and the tests' own queries use. */
export const testDatabaseUrl = (database: string = TEST_DATABASE) => appDatabaseUrl(testCluster().port, database)

/** The owner's address: migrations and the tests' clean-up (TRUNCATE, test-only triggers), never app work. */
export const ownerDatabaseUrl = (database: string = TEST_DATABASE) => databaseUrl(testCluster().port, database)

async function onMaintenance<T>(work: (client: pg.Client) => Promise<T>): Promise<T> {
  const client = new pg.Client({ connectionString: ownerDatabaseUrl('postgres'), application_name: 'startproof-test-clone' })
  await client.connect()
  try {
    return await work(client)
  } finally {
    await client.end()
  }
}

const ident = (name: string) => {
  if (!/^[a-z_][a-z0-9_]*$/.test(name)) throw new Error(`"${name}" is not a plain database name`)
  return name
}

/**
 * A new database `name` on this worker's cluster, a copy of `template` (replacing one left by an earlier run). The
 * copy keeps everything inside the database: tables, rows, triggers, sequences and the application role's grants.
 */
export async function cloneDatabase(name: string, template: string = MIGRATED_TEMPLATE): Promise<void> {
  await onMaintenance(async (client) => {
    await client.query(`DROP DATABASE IF EXISTS ${ident(name)} WITH (FORCE)`)
    await client.query(`CREATE DATABASE ${ident(name)} TEMPLATE ${ident(template)}`)
  })
}

export interface HistoryTemplate {
  name: string
  /** The `now` the history was loaded for (its dates count back from it). */
  loadedAt: Date
  summary: DemoLoadSummary
  /** How long loading took, in seconds (0 when the template was already there). */
  loadSeconds: number
}

const HISTORY_LOCK = 0x5747_4849 // any constant; serialises the first load between files on one cluster

/**
 * The demo data with its three years of history in a template on this worker's cluster, loaded the first time a test
 * file asks for it (about two minutes) and cloned after. It is loaded by `loadDemoData` into an empty migrated
 * database as the application role, then renamed into place, so a template under that name is always complete.
 */
export async function historyTemplate(): Promise<HistoryTemplate> {
  return onMaintenance(async (client) => {
    await client.query(`SELECT pg_advisory_lock($1)`, [HISTORY_LOCK])
    try {
      const existing = await client.query(`SELECT shobj_description(oid, 'pg_database') AS note FROM pg_database WHERE datname = $1`, [HISTORY_TEMPLATE])
      if (existing.rows.length) {
        const note = JSON.parse(existing.rows[0].note) as { loadedAt: string; summary: DemoLoadSummary }
        return { name: HISTORY_TEMPLATE, loadedAt: new Date(note.loadedAt), summary: note.summary, loadSeconds: 0 }
      }
      const building = `${HISTORY_TEMPLATE}_building`
      await client.query(`DROP DATABASE IF EXISTS ${building} WITH (FORCE)`)
      await client.query(`CREATE DATABASE ${building} TEMPLATE ${MIGRATED_TEMPLATE}`)
      // As the application role, as the demo-data test always loaded it: the load needs no more than row rights.
      const db = createDataSource(testDatabaseUrl(building), { poolSize: 4 })
      await db.initialize()
      const loadedAt = new Date()
      let summary: DemoLoadSummary
      const started = performance.now()
      try {
        if (!(await isEmpty(db))) throw new Error(`${MIGRATED_TEMPLATE} is not empty`)
        summary = await loadDemoData(db, { now: loadedAt })
      } finally {
        await db.destroy()
      }
      const loadSeconds = (performance.now() - started) / 1000
      await client.query(`ALTER DATABASE ${building} RENAME TO ${HISTORY_TEMPLATE}`)
      await client.query(`COMMENT ON DATABASE ${HISTORY_TEMPLATE} IS ${client.escapeLiteral(JSON.stringify({ loadedAt: loadedAt.toISOString(), summary }))}`)
      await client.query(`ALTER DATABASE ${HISTORY_TEMPLATE} WITH IS_TEMPLATE true`)
      return { name: HISTORY_TEMPLATE, loadedAt, summary, loadSeconds }
    } finally {
      await client.query(`SELECT pg_advisory_unlock($1)`, [HISTORY_LOCK])
    }
  })
}
