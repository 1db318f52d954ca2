/**
 * Screenshots of the runner's plausibility question (`npm start` first, then `npx tsx scripts/screenshots-runner-question.ts`):
 * a technician starts the chiller start-up on the demo's CH-1, types 368 psig for the evaporator refrigerant pressure
 * and leaves the input; the question is taken at 820 px (portrait tablet) and 390 px (phone) wide. Writes PNGs to
 * screenshots/ (git-ignored). BASE_URL overrides http://localhost:3000.
 */
import fs from 'node:fs'
import path from 'node:path'
import { DEMO_PEOPLE } from '../server/db/demo-data'
import { launchChromium } from '../tests/helpers/browser'

const base = process.env.BASE_URL ?? 'http://localhost:3000'
const out = path.resolve(import.meta.dirname, '..', 'screenshots')
fs.mkdirSync(out, { recursive: true })

const browser = await launchChromium()
try {
  const technician = DEMO_PEOPLE.find((p) => p.role === 'technician')!
  for (const [name, width, height] of [
    ['runner-question-820', 820, 1180],
    ['runner-question-390', 390, 844],
  ] as const) {
    const context = await browser.createBrowserContext()
    const page = await context.newPage()
    await page.evaluateOnNewDocument('globalThis.__name = (f) => f')
    await page.setViewport({ width, height, deviceScaleFactor: 1 })
    await page.goto(`${base}/sign-in`, { waitUntil: 'networkidle0' })
    await page.type('input[data-test=email]', technician.email)
    await page.type('input[data-test=password]', technician.password)
    await Promise.all([page.waitForNavigation({ waitUntil: 'networkidle0' }).catch(() => undefined), page.click('[data-test=sign-in]')])
    const runId = await page.evaluate(async () => {
      const json = async (url: string, init?: RequestInit) => {
        const res = await fetch(url, { headers: { 'Content-Type': 'application/json', Accept: 'application/json' }, ...init })
        if (!res.ok) throw new Error(`${init?.method ?? 'GET'} ${url}: ${res.status} ${await res.text()}`)
        return res.json()
      }
      const projects = (await json('/api/projects')).projects as { id: string; code: string }[]
      for (const project of projects) {
        const equipment = (await json(`/api/projects/${project.id}/equipment`)).equipment as { id: string; kind: string; tag: string }[]
        const chiller = equipment.find((e) => e.kind === 'centrifugal_chiller')
        if (!chiller) continue
        const template = (await json('/api/templates')).templates.find((t: { key: string }) => t.key === 'centrifugal-chiller-startup')
        const { run } = await json(`/api/equipment/${chiller.id}/runs`, { method: 'POST', body: JSON.stringify({ templateId: template.id }) })
        return run.id as string
      }
      throw new Error('no chiller the technician may run')
    })
    await page.goto(`${base}/runs/${runId}?step=evaporator`, { waitUntil: 'networkidle0' })
    // Acknowledge the step's cautions when the runner asks for it.
    const ack = await page.$('[data-test^=acknowledge]')
    if (ack) await ack.click()
    await page.waitForSelector('input#field-evapPressure', { visible: true })
    await page.click('input#field-evapPressure')
    await page.keyboard.type('368')
    await page.keyboard.press('Tab')
    await page.waitForSelector('[data-test=plausibility-evapPressure]', { visible: true })
    await new Promise((r) => setTimeout(r, 400))
    await page.$eval('[data-test=field-evapPressure]', (el) => el.scrollIntoView({ block: 'center' }))
    await page.screenshot({ path: path.join(out, `${name}.png`) })
    console.log(`wrote screenshots/${name}.png (run ${runId})`)
    // Then: kept as typed (the saturated temperature says why it cannot be worked out, in psig), and a negative flow,
    // which is refused with no verdict.
    await page.click('[data-test=plausibility-keep-evapPressure]')
    await page.click('input#field-chwFlow')
    await page.keyboard.type('-10')
    await page.keyboard.press('Tab')
    await new Promise((r) => setTimeout(r, 800))
    await page.$eval('[data-test=field-chwFlow]', (el) => el.scrollIntoView({ block: 'start' }))
    await page.screenshot({ path: path.join(out, `${name}-after.png`) })
    console.log(`wrote screenshots/${name}-after.png`)
    await context.close()
  }
} finally {
  await browser.close()
}
