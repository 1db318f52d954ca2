import fs from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import type { TestProject } from 'vitest/node'
import {
  databaseUrl,
  ensureDatabase,
  ensurePostgresInstalled,
  freePort,
  initCluster,
  prepareClusterDir,
  startCluster,
  stopCluster,
} from '../../server/db/cluster'
import { createDataSource } from '../../server/db/data-source'

declare module 'vitest' {
  export interface ProvidedContext {
    databaseUrl: string
    pg: { bin: string; dataDir: string; port: number; logFile: string }
  }
}

/** Starts a throwaway PostgreSQL cluster on a free loopback port for the server tests, and removes it after. */
export default async function setup(project: TestProject) {
  const bin = ensurePostgresInstalled()
  const root = fs.mkdtempSync(path.join(os.tmpdir(), 'startproof-test-'))
  fs.chmodSync(root, 0o755)
  const dataDir = prepareClusterDir(path.join(root, 'pg'))
  const logFile = path.join(root, 'postgres.log')
  const port = await freePort()
  initCluster(bin, dataDir)
  startCluster(bin, { dataDir, port, logFile, throwaway: true })
  ensureDatabase(bin, port, 'startproof_test')
  const url = databaseUrl(port, 'startproof_test')

  const db = createDataSource(url, { poolSize: 2 })
  await db.initialize()
  await db.runMigrations({ transaction: 'each' })
  await db.destroy()

  project.provide('databaseUrl', url)
  project.provide('pg', { bin, dataDir, port, logFile })

  return () => {
    try {
      stopCluster(bin, dataDir, 'immediate')
    } finally {
      fs.rmSync(root, { recursive: true, force: true })
    }
  }
}
