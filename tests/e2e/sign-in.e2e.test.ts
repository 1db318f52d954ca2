import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { demoPerson as person, freshPage as newPage, signIn as signInAs, signOutFromMenu, startProduct, type RunningProduct } from '../helpers/product'
import type { Page } from 'puppeteer-core'

let product: RunningProduct
let base: string

beforeAll(async () => {
  product = await startProduct('startproof_e2e_sign_in')
  base = product.base
}, 120_000)

afterAll(() => product?.stop())

const freshPage = () => newPage(product)
const signIn = (page: Page, email: string, password: string) => signInAs(product, page, email, password)

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
    expect(await navLabels(page)).toEqual(['Today', 'Projects', 'Archive', 'Verify'])
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
    expect(await navLabels(page)).toEqual(['Projects', 'Archive', 'Verify'])
    await page.browserContext().close()
  })

  it('when an admin adds a person and that person signs in, then the new account works; after sign-out the page is protected again', async () => {
    const page = await freshPage()
    const admin = person('admin')
    await signIn(page, admin.email, admin.password)
    await page.waitForSelector('[data-test=project-list]')
    expect(await navLabels(page)).toEqual(['Projects', 'Archive', 'Templates', 'People', 'Outbox', 'Verify'])

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
    await signOutFromMenu(page)
    await page.goto(`${base}/people`, { waitUntil: 'networkidle0' })
    expect(new URL(page.url()).pathname).toBe('/sign-in')

    await signIn(page, 'orla.penhallow@tallowmere.test', 'orla-first-password')
    await page.waitForSelector('[data-test=project-list], .el-empty')
    expect(await page.evaluate(() => document.body.innerText)).toContain('Orla Penhallow')
    await page.browserContext().close()
  })
})
