import type { TestProject } from 'vitest/node'
import { startThrowawayCluster } from '../../server/db/cluster'
import { createDataSource } from '../../server/db/data-source'

declare module 'vitest' {
  export interface ProvidedContext {
    databaseUrl: string
    pg: { bin: string; dataDir: string; port: number; logFile: string }
  }
}

/** Starts a throwaway PostgreSQL cluster on a free loopback port for the server tests, and removes it after. */
export default async function setup(project: TestProject) {
  const cluster = await startThrowawayCluster('startproof-test-', 'startproof_test')
  try {
    const db = createDataSource(cluster.url, { poolSize: 2 })
    await db.initialize()
    await db.runMigrations({ transaction: 'each' })
    await db.destroy()
  } catch (err) {
    cluster.remove()
    throw err
  }

  project.provide('databaseUrl', cluster.url)
  project.provide('pg', { bin: cluster.bin, dataDir: cluster.dataDir, port: cluster.port, logFile: cluster.logFile })

  return () => cluster.remove()
}
