import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Page } from 'puppeteer-core'
import { bodyText, demoPerson, freshPage, signIn, startProduct, type RunningProduct } from '../helpers/product'

let product: RunningProduct

beforeAll(async () => {
  product = await startProduct('startproof_e2e_projects')
}, 120_000)

afterAll(() => product?.stop())

async function typeInto(page: Page, selector: string, text: string) {
  await page.click(selector, { count: 3 })
  await page.type(selector, text)
}

describe('an admin sets up a project and its equipment', { timeout: 90_000 }, () => {
  it('when a project is created and a pump added, then the design point is refused until complete and then shown in project units', async () => {
    const page = await freshPage(product)
    const admin = demoPerson('admin')
    await signIn(product, page, admin.email, admin.password)
    await page.waitForSelector('[data-test=new-project]')

    await page.click('[data-test=new-project]')
    await page.waitForSelector('input[data-test=project-code]', { visible: true })
    await typeInto(page, 'input[data-test=project-code]', 'e2e-pl')
    await typeInto(page, 'input[data-test=project-name]', 'Test plant for the browser')
    await typeInto(page, 'input[data-test=project-site]', 'Test site')
    await typeInto(page, 'input[data-test=project-address]', '3 Test Way')
    await page.click('[data-test=save-project]')
    await page.waitForFunction(() => location.pathname.startsWith('/projects/') && document.body.innerText.includes('Test plant for the browser'))
    await page.waitForSelector('.el-overlay-dialog', { hidden: true })

    await page.click('[data-test=add-equipment]')
    await page.waitForSelector('input[data-test=equipment-tag]', { visible: true })
    await typeInto(page, 'input[data-test=equipment-tag]', 'p-9')
    await page.click('[data-test=kind-pump]')
    await page.waitForSelector('[data-test=dp-pumpDesignFlow] input', { visible: true })
    await typeInto(page, 'input[data-test=equipment-manufacturer]', 'Test Pumps')
    await typeInto(page, 'input[data-test=equipment-model]', 'TP-1')
    await typeInto(page, 'input[data-test=equipment-serial]', 'TP-0001')
    await typeInto(page, '[data-test=dp-pumpDesignFlow] input', '800')
    await page.click('[data-test=save-equipment]')
    await page.waitForFunction(() => document.body.innerText.includes('Design head (total dynamic head) is required'))

    await typeInto(page, '[data-test=dp-pumpDesignHead] input', '60')
    await typeInto(page, '[data-test=dp-motorRatedPower] input', '25')
    await typeInto(page, '[data-test=dp-motorRatedSpeed] input', '1770')
    await typeInto(page, '[data-test=dp-voltage] input', '460')
    await typeInto(page, '[data-test=dp-fullLoadAmps] input', '31')
    await page.click('[data-test=save-equipment]')
    await page.waitForSelector('[data-test=design-point]')

    const text = await bodyText(page)
    expect(new URL(page.url()).pathname).toMatch(/^\/equipment\//)
    expect(text).toContain('P-9')
    expect(text).toContain('800 gpm')
    expect(text).toContain('60 ft of water')
    await page.browserContext().close()
  })

  it('when a technician opens equipment, then they see it read-only', async () => {
    const page = await freshPage(product)
    const tech = demoPerson('technician')
    await signIn(product, page, tech.email, tech.password)
    await page.waitForSelector('[data-test=project-card]')
    // The hospital project and its first chiller (the technician may be on other demo projects too).
    const cards = await page.$$('[data-test=project-card]')
    const texts = await Promise.all(cards.map((c) => c.evaluate((el) => el.textContent ?? '')))
    await cards[texts.findIndex((t) => t.includes('VXH-CUP'))].click()
    await page.waitForSelector('[data-test=equipment-table]')
    expect(await page.$('[data-test=add-equipment]')).toBeNull()
    const links = await page.$$('[data-test=equipment-table] a')
    const tags = await Promise.all(links.map((a) => a.evaluate((el) => el.textContent?.trim() ?? '')))
    await links[tags.indexOf('CH-1')].click()
    await page.waitForSelector('[data-test=design-point]')
    expect(await page.$('[data-test=edit-equipment]')).toBeNull()
    expect(await bodyText(page)).toContain('500 tons')
    await page.browserContext().close()
  })
})
