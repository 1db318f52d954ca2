import fs from 'node:fs'
import path from 'node:path'
import { inject } from 'vitest'
import puppeteer, { type Browser, type Page } from 'puppeteer-core'
import { loadConfig } from '../../server/config'
import { freePort } from '../../server/db/cluster'
import { DEMO_PEOPLE } from '../../server/db/demo-data'
import { startServer, type RunningServer } from '../../server/index'
import { BUILD_RESULT } from '../setup/client'
import { cloneDatabase, DEMO_TEMPLATE, historyTemplate, ownerDatabaseUrl, testDatabaseUrl } from './cluster'

export interface RunningProduct {
  base: string
  server: RunningServer
  /** The suite's one Chromium (tests/setup/browser.ts); open pages in a browser context of their own. */
  browser: Browser
  stop(): Promise<void>
}

/** Waits for the client build the global setup started (tests/setup/client.ts), and gives its folder. */
export async function clientBuilt(timeoutMs = 300_000): Promise<string> {
  const dist = inject('clientDist')
  const result = path.join(path.dirname(dist), BUILD_RESULT)
  const until = Date.now() + timeoutMs
  while (!fs.existsSync(result)) {
    if (Date.now() > until) throw new Error(`the client build did not finish within ${timeoutMs / 1000} s`)
    await new Promise((r) => setTimeout(r, 250))
  }
  const outcome = fs.readFileSync(result, 'utf8')
  if (outcome !== 'ok') throw new Error(outcome)
  return dist
}

/**
 * The real product for a browser test: a database of its own on the test cluster with the demo data (a copy of the
 * template made once by the global setup, or with `history` of the one made on first use), the server on a free
 * loopback port serving the client built by the global setup, and the suite's Chromium.
 */
export async function startProduct(database: string, options: { history?: boolean } = {}): Promise<RunningProduct> {
  // Without the three years of demo history unless asked: it takes minutes to load and its reports would render behind the test.
  await cloneDatabase(database, options.history ? (await historyTemplate()).name : DEMO_TEMPLATE)
  const clientDist = await clientBuilt()

  const port = await freePort()
  const storage = `/tmp/startproof-e2e-files-${database}`
  const certs = `/tmp/startproof-e2e-certs-${database}`
  // As npm start does: the server migrates as the owner (nothing to do on the copy) and connects as the application role.
  const server = await startServer(
    loadConfig({ NODE_ENV: 'test', DATABASE_URL: testDatabaseUrl(database), MIGRATION_DATABASE_URL: ownerDatabaseUrl(database), PORT: String(port), HOST: '127.0.0.1', CLIENT_DIST: clientDist, STORAGE_DIR: storage, CERT_DIR: certs }),
  )
  const browser = await puppeteer.connect({ browserWSEndpoint: inject('browserWSEndpoint') })
  // Contexts other files opened before this one connected; everything else this file opened is closed at stop.
  const before = new Set(browser.browserContexts())
  return {
    base: `http://127.0.0.1:${port}`,
    server,
    browser,
    async stop() {
      for (const context of browser.browserContexts()) {
        if (context !== browser.defaultBrowserContext() && !before.has(context)) await context.close().catch(() => undefined)
      }
      await browser.disconnect()
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

/**
 * Opens the user menu and signs out. The menu grows in (a scale transition): a click aimed while it is still growing
 * lands on whatever item is under that point once it has grown, so the item is clicked only once it stands still.
 */
export async function signOutFromMenu(page: Page) {
  await page.click('[data-test=user-menu]')
  await page.waitForSelector('[data-test=sign-out]', { visible: true })
  await page.waitForFunction(() => {
    const item = document.querySelector('[data-test=sign-out]')
    const popper = item?.closest('.el-popper')
    if (!item || !popper) return false
    return popper.getAnimations({ subtree: true }).length === 0 && !/-(enter|leave)-(active|from|to)/.test(popper.className)
  })
  await page.click('[data-test=sign-out]')
  await page.waitForSelector('input[data-test=email]', { visible: true })
}

export const bodyText = (page: Page) => page.evaluate(() => document.body.innerText)
