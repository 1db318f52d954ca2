import { inject } from 'vitest'
import type { Page } from 'puppeteer-core'
import { loadConfig } from '../../server/config'
import { appDatabaseUrl, databaseUrl, ensureDatabase, freePort } from '../../server/db/cluster'
import { createDataSource } from '../../server/db/data-source'
import { migrateDatabase } from '../../server/db/migrate'
import { DEMO_PEOPLE, loadDemoData } from '../../server/db/demo-data'
import { startServer, type RunningServer } from '../../server/index'
import { launchChromium } from './browser'

export interface RunningProduct {
  base: string
  server: RunningServer
  browser: Awaited<ReturnType<typeof launchChromium>>
  stop(): Promise<void>
}

/**
 * The real product for a browser test: a database of its own on the test cluster with the demo data, the server
 * on a free loopback port serving the client built by the global setup, and Debian's Chromium.
 */
export async function startProduct(database: string, options: { history?: boolean } = {}): Promise<RunningProduct> {
  const pg = inject('pg')
  ensureDatabase(pg.bin, pg.port, database)
  const url = databaseUrl(pg.port, database)
  const db = createDataSource(url, { poolSize: 2 })
  // As npm start does: migrations, clean-up and demo data as the owner; the server connects as the application role.
  await migrateDatabase({ migrationUrl: url, appRole: inject('appRole') })
  await db.initialize()
  await db.query(
    `TRUNCATE closeout_document, report, outbound_mail, run_snapshot, signature, run_attachment, finding, run_change, run_step, reading, run, template_version, checklist_template, equipment, attachment, project_member, project, app_user, organization, session, rate_limit CASCADE`,
  )
  await db.query(`TRUNCATE audit_event`)
  // Without the three years of demo history unless asked: it takes a minute to load and its reports would render behind the test.
  await loadDemoData(db, { history: options.history ?? false })
  await db.destroy()

  const port = await freePort()
  const storage = `/tmp/startproof-e2e-files-${database}`
  const certs = `/tmp/startproof-e2e-certs-${database}`
  const server = await startServer(
    loadConfig({ NODE_ENV: 'test', DATABASE_URL: appDatabaseUrl(pg.port, database), MIGRATION_DATABASE_URL: url, PORT: String(port), HOST: '127.0.0.1', CLIENT_DIST: inject('clientDist'), STORAGE_DIR: storage, CERT_DIR: certs }),
  )
  const browser = await launchChromium()
  return {
    base: `http://127.0.0.1:${port}`,
    server,
    browser,
    async stop() {
      await browser.cleanup()
      await server.close()
    },
  }
}

export const demoPerson = (role: string) => DEMO_PEOPLE.find((p) => p.role === role)!

export async function freshPage(product: RunningProduct): Promise<Page> {
  const context = await product.browser.createBrowserContext()
  const page = await context.newPage()
  await page.setViewport({ width: 1180, height: 820 })
  return page
}

export async function signIn(product: RunningProduct, page: Page, email: string, password: string) {
  await page.goto(`${product.base}/sign-in`, { waitUntil: 'networkidle0' })
  await page.type('input[data-test=email]', email)
  await page.type('input[data-test=password]', password)
  await page.click('[data-test=sign-in]')
}

export const bodyText = (page: Page) => page.evaluate(() => document.body.innerText)
