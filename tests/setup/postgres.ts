import type { TestProject } from 'vitest/node'
import { startThrowawayCluster } from '../../server/db/cluster'
import { migrateDatabase } from '../../server/db/migrate'

declare module 'vitest' {
  export interface ProvidedContext {
    /** The application role's address: what the app, its services and the tests' own queries use. */
    databaseUrl: string
    /** The owner's address: migrations and the tests' clean-up (TRUNCATE, test-only triggers), never app work. */
    ownerDatabaseUrl: string
    /** The application role's name. */
    appRole: string
    pg: { bin: string; dataDir: string; port: number; logFile: string }
  }
}

/**
 * Starts a throwaway PostgreSQL cluster on a free loopback port for the server tests, with the owner and the
 * application role, migrates it as the owner (with the app role's grants), and removes it after.
 */
export default async function setup(project: TestProject) {
  const cluster = await startThrowawayCluster('startproof-test-', 'startproof_test')
  try {
    await migrateDatabase({ migrationUrl: cluster.url, appRole: cluster.appRole })
  } catch (err) {
    cluster.remove()
    throw err
  }

  project.provide('databaseUrl', cluster.appUrl)
  project.provide('ownerDatabaseUrl', cluster.url)
  project.provide('appRole', cluster.appRole)
  project.provide('pg', { bin: cluster.bin, dataDir: cluster.dataDir, port: cluster.port, logFile: cluster.logFile })

  return () => cluster.remove()
}
