/** The databases every test cluster holds (made by tests/setup/postgres.ts before any test runs). */

/** The server tests' own database: migrated, emptied by `resetDatabase()` between tests. */
export const TEST_DATABASE = 'startproof_test'
/** Migrated and empty; a template only (nobody connects to it, so it can always be cloned). */
export const MIGRATED_TEMPLATE = 'startproof_tpl_migrated'
/** The demo data without its history: what every browser test starts the product with. */
export const DEMO_TEMPLATE = 'startproof_tpl_demo'
/** The demo data with its three years of history, made on first use in a cluster (tests/helpers/cluster.ts). */
export const HISTORY_TEMPLATE = 'startproof_tpl_history'

/** Where one worker's throwaway cluster is and how to start it again. */
export interface TestCluster {
  bin: string
  dataDir: string
  port: number
  logFile: string
}
