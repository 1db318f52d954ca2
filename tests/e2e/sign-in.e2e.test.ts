import { spawnSync } from 'node:child_process'
import fs from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import type { Page } from 'puppeteer-core'
import { loadConfig } from '../../server/config'
import { databaseUrl, ensureDatabase, freePort } from '../../server/db/cluster'
import { createDataSource } from '../../server/db/data-source'
import { DEMO_PEOPLE, loadDemoData } from '../../server/db/demo-data'
import { startServer, type RunningServer } from '../../server/index'
import { launchChromium } from '../helpers/browser'

// The real product: the client built by Vite, the server on a loopback port, the demo data, Debian's Chromium.
let server: RunningServer
let browser: Awaited<ReturnType<typeof launchChromium>>
let base: string
let distDir: string

const person = (role: string) => DEMO_PEOPLE.find((p) => p.role === role)!

beforeAll(async () => {
  const pg = inject('pg')
  ensureDatabase(pg.bin, pg.port, 'startproof_e2e')
  const url = databaseUrl(pg.port, 'startproof_e2e')
  const db = createDataSource(url, { poolSize: 2 })
  await db.initialize()
  await db.runMigrations({ transaction: 'each' })
  await db.query(`TRUNCATE project_member, project, app_user, organization, session, rate_limit CASCADE`)
  await db.query(`TRUNCATE audit_event`)
  await loadDemoData(db)
  await db.destroy()

  distDir = fs.mkdtempSync(path.join(os.tmpdir(), 'startproof-e2e-client-'))
  const build = spawnSync('node_modules/.bin/vite', ['build', '--outDir', distDir, '--emptyOutDir', '--logLevel', 'error'], { encoding: 'utf8' })
  if (build.status !== 0) throw new Error(`vite build failed: ${build.stderr}`)

  const port = await freePort()
  server = await startServer(loadConfig({ NODE_ENV: 'test', DATABASE_URL: url, PORT: String(port), HOST: '127.0.0.1', CLIENT_DIST: distDir }))
  base = `http://127.0.0.1:${port}`
  browser = await launchChromium()
}, 120_000)

afterAll(async () => {
  await browser?.cleanup()
  await server?.close()
  if (distDir) fs.rmSync(distDir, { recursive: true, force: true })
})

async function freshPage(): Promise<Page> {
  const context = await browser.createBrowserContext()
  const page = await context.newPage()
  await page.setViewport({ width: 1180, height: 820 })
  return page
}

async function signIn(page: Page, email: string, password: string) {
  await page.goto(`${base}/sign-in`, { waitUntil: 'networkidle0' })
  await page.type('input[data-test=email]', email)
  await page.type('input[data-test=password]', password)
  await page.click('[data-test=sign-in]')
}

const navLabels = (page: Page) => page.$$eval('nav[aria-label=Main] a', (links) => links.map((a) => a.textContent?.trim()))

describe('signing in through the browser', { timeout: 60_000 }, () => {
  it('when nobody is signed in, then a protected page sends them to sign-in and back after', async () => {
    const page = await freshPage()
    await page.goto(`${base}/projects`, { waitUntil: 'networkidle0' })
    expect(new URL(page.url()).pathname).toBe('/sign-in')
    expect(new URL(page.url()).searchParams.get('redirect')).toBe('/projects')

    const rep = person('owner_rep')
    await page.type('input[data-test=email]', rep.email)
    await page.type('input[data-test=password]', rep.password)
    await page.click('[data-test=sign-in]')
    await page.waitForSelector('[data-test=project-list]')
    expect(new URL(page.url()).pathname).toBe('/projects')
    await page.browserContext().close()
  })

  it('when the password is wrong or a field is empty, then the form says so in words and keeps the email', async () => {
    const page = await freshPage()
    await page.goto(`${base}/sign-in`, { waitUntil: 'networkidle0' })
    await page.click('[data-test=sign-in]')
    await page.waitForFunction(() => document.body.innerText.includes('Email is required'))
    expect(await page.evaluate(() => document.body.innerText)).toContain('Password is required')

    await page.type('input[data-test=email]', person('technician').email)
    await page.type('input[data-test=password]', 'wrong password here')
    await page.click('[data-test=sign-in]')
    const alert = await page.waitForSelector('[data-test=sign-in-error]')
    expect(await alert!.evaluate((el) => el.textContent)).toContain('Email or password is incorrect')
    expect(await page.$eval('input[data-test=email]', (el) => (el as HTMLInputElement).value)).toBe(person('technician').email)
    await page.browserContext().close()
  })

  it('when a technician signs in, then Today is their landing page and People is out of reach', async () => {
    const page = await freshPage()
    const tech = person('technician')
    await signIn(page, tech.email, tech.password)
    await page.waitForSelector('[data-test=project-list]')
    expect(new URL(page.url()).pathname).toBe('/')
    expect(await navLabels(page)).toEqual(['Today', 'Projects'])
    expect(await page.evaluate(() => document.body.innerText)).toContain('Before any start-up')

    await page.goto(`${base}/people`, { waitUntil: 'networkidle0' })
    expect(new URL(page.url()).pathname).toBe('/')
    await page.browserContext().close()
  })

  it.each(['owner_rep', 'contractor'])('when a %s signs in, then they land on Projects with only their projects', async (role) => {
    const page = await freshPage()
    const p = person(role)
    await signIn(page, p.email, p.password)
    await page.waitForSelector('[data-test=project-card]')
    expect(new URL(page.url()).pathname).toBe('/projects')
    expect(await navLabels(page)).toEqual(['Projects'])
    await page.browserContext().close()
  })

  it('when an admin adds a person and that person signs in, then the new account works; after sign-out the page is protected again', async () => {
    const page = await freshPage()
    const admin = person('admin')
    await signIn(page, admin.email, admin.password)
    await page.waitForSelector('[data-test=project-list]')
    expect(await navLabels(page)).toEqual(['Projects', 'People'])

    await page.goto(`${base}/people`, { waitUntil: 'networkidle0' })
    await page.waitForSelector('[data-test=people-table]')
    await page.click('[data-test=add-person]')
    await page.waitForSelector('input[data-test=new-name]', { visible: true })
    await page.type('input[data-test=new-name]', 'Orla Penhallow')
    await page.type('input[data-test=new-email]', 'orla.penhallow@tallowmere.test')
    await page.type('input[data-test=new-password]', 'short')
    await page.click('[data-test=create-person]')
    await page.waitForFunction(() => document.body.innerText.includes('Password must be at least 10 characters'))
    await page.click('input[data-test=new-password]', { count: 3 })
    await page.type('input[data-test=new-password]', 'orla-first-password')
    await page.click('[data-test=create-person]')
    await page.waitForFunction(() => document.querySelector('[data-test=people-table]')?.textContent?.includes('orla.penhallow@tallowmere.test'))

    // The dialog's modal layer fades out after saving; a click before it has gone would land on it.
    await page.waitForSelector('.el-overlay-dialog', { hidden: true })
    await page.click('[data-test=user-menu]')
    await page.waitForSelector('[data-test=sign-out]', { visible: true })
    await page.click('[data-test=sign-out]')
    await page.waitForSelector('input[data-test=email]')
    await page.goto(`${base}/people`, { waitUntil: 'networkidle0' })
    expect(new URL(page.url()).pathname).toBe('/sign-in')

    await signIn(page, 'orla.penhallow@tallowmere.test', 'orla-first-password')
    await page.waitForSelector('[data-test=project-list], .el-empty')
    expect(await page.evaluate(() => document.body.innerText)).toContain('Orla Penhallow')
    await page.browserContext().close()
  })
})
