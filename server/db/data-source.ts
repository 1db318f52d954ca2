import 'reflect-metadata'
import pg from 'pg'
import { DataSource } from 'typeorm'
import { entities } from '../entities'
import { migrations } from '../migrations'

/** One DataSource for the app, the CLI scripts and the tests; never `synchronize`. */
export interface DataSourceOptions {
  poolSize?: number
  applicationName?: string
  /** How long a caller waits for a free connection, ms (pg-pool's connectionTimeoutMillis); then the pool refuses. */
  poolWaitMs?: number
  /** PostgreSQL statement_timeout for every connection, ms (0 or absent: the server's default). */
  statementTimeoutMs?: number
  /** PostgreSQL idle_in_transaction_session_timeout for every connection, ms. */
  idleInTransactionTimeoutMs?: number
}

/** The pool settings of the request pool from the configuration. */
export function requestPoolOptions(config: { DB_POOL_SIZE: number; DB_POOL_WAIT_MS: number; DB_STATEMENT_TIMEOUT_MS: number; DB_IDLE_IN_TRANSACTION_TIMEOUT_MS: number }): DataSourceOptions {
  return {
    poolSize: config.DB_POOL_SIZE,
    poolWaitMs: config.DB_POOL_WAIT_MS,
    statementTimeoutMs: config.DB_STATEMENT_TIMEOUT_MS,
    idleInTransactionTimeoutMs: config.DB_IDLE_IN_TRANSACTION_TIMEOUT_MS,
  }
}

export function createDataSource(databaseUrl: string, options: DataSourceOptions = {}): DataSource {
  return new DataSource({
    type: 'postgres',
    url: databaseUrl,
    entities,
    migrations,
    synchronize: false,
    migrationsRun: false,
    // The migrations make the schema (ids come from gen_random_uuid(), built in); the application role may not create
    // extensions, and the owner should not get one it never asked for.
    installExtensions: false,
    logging: ['error', 'warn'],
    poolSize: options.poolSize ?? 10,
    extra: {
      connectionTimeoutMillis: options.poolWaitMs ?? 5000,
      ...(options.statementTimeoutMs ? { statement_timeout: options.statementTimeoutMs } : {}),
      ...(options.idleInTransactionTimeoutMs ? { idle_in_transaction_session_timeout: options.idleInTransactionTimeoutMs } : {}),
      idleTimeoutMillis: 30000,
      application_name: options.applicationName ?? 'startproof',
    },
  })
}

/** The session store's own small pool: sign-in and session reads never queue behind request transactions. */
export function createSessionPool(config: { DATABASE_URL: string; SESSION_POOL_SIZE: number; DB_POOL_WAIT_MS: number; DB_STATEMENT_TIMEOUT_MS: number }): pg.Pool {
  const pool = new pg.Pool({
    connectionString: config.DATABASE_URL,
    max: config.SESSION_POOL_SIZE,
    connectionTimeoutMillis: config.DB_POOL_WAIT_MS,
    idleTimeoutMillis: 30_000,
    statement_timeout: config.DB_STATEMENT_TIMEOUT_MS,
    application_name: 'startproof-sessions',
  })
  // An idle connection dropped by the server (a restart) is replaced on the next request; it must not crash the process.
  pool.on('error', () => {})
  return pool
}
