import 'reflect-metadata'
import { execFileSync } from 'node:child_process'
import fs from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import pg from 'pg'
import type { TestProject } from 'vitest/node'
import {
  databaseUrl,
  freePort,
  prepareClusterDir,
  startCluster,
  startThrowawayCluster,
  stopCluster,
} from '../../server/db/cluster'
import { createDataSource } from '../../server/db/data-source'
import { loadDemoData } from '../../server/db/demo-data'
import { migrateDatabase } from '../../server/db/migrate'
import { DEMO_TEMPLATE, MIGRATED_TEMPLATE, TEST_DATABASE, type TestCluster } from './databases'

declare module 'vitest' {
  export interface ProvidedContext {
    /** One throwaway cluster per test worker (`VITEST_POOL_ID`), each a copy of the first; see tests/helpers/cluster.ts. */
    clusters: TestCluster[]
    /** The application role's name. */
    appRole: string
  }
}

/**
 * Starts a throwaway PostgreSQL cluster on a free loopback port for the server tests, with the owner and the
 * application role, migrates it as the owner (with the app role's grants), and prepares the template databases the
 * tests clone (CREATE DATABASE … TEMPLATE copies every table, row, trigger and grant inside the database):
 *
 * - `startproof_tpl_migrated`: migrated and empty;
 * - `startproof_tpl_demo`: the demo data without its history, as every browser test starts the product with.
 *
 * Then, when the server tests run in more than one worker, the stopped cluster's folder is copied once per further
 * worker and each copy started on a port of its own: a test that stops "the database" (database-outage, runs) then
 * stops only its own worker's cluster, and the templates are made once.
 */
export default async function setup(project: TestProject) {
  const workers = workerCount(project)
  const first = await startThrowawayCluster('startproof-test-', TEST_DATABASE)
  const removers: Array<() => void> = [first.remove]
  const removeAll = () => {
    for (const remove of removers.reverse()) {
      try {
        remove()
      } catch (err) {
        console.error((err as Error).message)
      }
    }
  }
  const clusters: TestCluster[] = []
  try {
    await migrateDatabase({ migrationUrl: first.url, appRole: first.appRole })
    await prepareTemplates(first.port)

    clusters.push({ bin: first.bin, dataDir: first.dataDir, port: first.port, logFile: first.logFile })
    if (workers > 1) {
      stopCluster(first.bin, first.dataDir, 'fast')
      for (let i = 2; i <= workers; i++) {
        const root = fs.mkdtempSync(path.join(path.dirname(path.dirname(first.dataDir)), `startproof-test-${i}-`))
        fs.chmodSync(root, 0o755)
        removers.push(() => {
          try {
            stopCluster(first.bin, path.join(root, 'pg'), 'immediate')
          } finally {
            fs.rmSync(root, { recursive: true, force: true })
          }
        })
        const dataDir = path.join(root, 'pg')
        // cp -a keeps the cluster user's ownership and the 0700 mode PostgreSQL insists on.
        execFileSync('cp', ['-a', first.dataDir, dataDir])
        prepareClusterDir(dataDir)
        clusters.push({ bin: first.bin, dataDir, port: await freePort(), logFile: path.join(root, 'postgres.log') })
      }
      for (const c of clusters) startCluster(c.bin, { dataDir: c.dataDir, port: c.port, logFile: c.logFile, throwaway: true })
    }
  } catch (err) {
    removeAll()
    throw err
  }

  project.provide('clusters', clusters)
  project.provide('appRole', first.appRole)

  return removeAll
}

/** As Vitest counts its workers: the project's maxWorkers, the run's, or all cores but one. */
function workerCount(project: TestProject): number {
  const configured = Number(project.config.maxWorkers || project.vitest.config.maxWorkers || 0)
  return Math.max(1, configured || os.availableParallelism() - 1)
}

async function prepareTemplates(port: number) {
  const admin = new pg.Client({ connectionString: databaseUrl(port, 'postgres'), application_name: 'startproof-test-setup' })
  await admin.connect()
  try {
    await admin.query(`CREATE DATABASE ${MIGRATED_TEMPLATE} TEMPLATE ${TEST_DATABASE}`)
    await admin.query(`CREATE DATABASE ${DEMO_TEMPLATE} TEMPLATE ${MIGRATED_TEMPLATE}`)
    // As npm start does: the demo data as the owner.
    const db = createDataSource(databaseUrl(port, DEMO_TEMPLATE), { poolSize: 2 })
    await db.initialize()
    try {
      await loadDemoData(db, { history: false })
    } finally {
      await db.destroy()
    }
    for (const name of [MIGRATED_TEMPLATE, DEMO_TEMPLATE]) await admin.query(`ALTER DATABASE ${name} WITH IS_TEMPLATE true`)
  } finally {
    await admin.end()
  }
}
