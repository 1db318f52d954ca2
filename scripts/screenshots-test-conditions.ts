/**
 * Screenshots of the test conditions, the one pre-lubrication timing and the project's site pressure
 * (`npm start` first, then `npx tsx scripts/screenshots-test-conditions.ts`): a technician starts the chiller start-up
 * on the demo's high-altitude site, opens the test-conditions step, then the pre-lubrication step with a captured
 * oil-pressure rise; the admin opens the project form. 1280, 820 and 390 px wide. Writes PNGs to screenshots/
 * (git-ignored). BASE_URL overrides http://localhost:3000.
 */
import fs from 'node:fs'
import path from 'node:path'
import { DEMO_PEOPLE } from '../server/db/demo-data'
import { launchChromium } from '../tests/helpers/browser'

const base = process.env.BASE_URL ?? 'http://localhost:3000'
const out = path.resolve(import.meta.dirname, '..', 'screenshots')
fs.mkdirSync(out, { recursive: true })
const SIZES = [[1280, 900], [820, 1180], [390, 844]] as const

const browser = await launchChromium()
try {
  const signIn = async (email: string, width: number, height: number) => {
    const person = DEMO_PEOPLE.find((p) => p.email === email)!
    const context = await browser.createBrowserContext()
    const page = await context.newPage()
    await page.evaluateOnNewDocument('globalThis.__name = (f) => f')
    await page.setViewport({ width, height, deviceScaleFactor: 1 })
    await page.goto(`${base}/sign-in`, { waitUntil: 'networkidle0' })
    await page.type('input[data-test=email]', person.email)
    await page.type('input[data-test=password]', person.password)
    await Promise.all([page.waitForNavigation({ waitUntil: 'networkidle0' }).catch(() => undefined), page.click('[data-test=sign-in]')])
    return { context, page }
  }
  const technician = DEMO_PEOPLE.find((p) => p.role === 'technician' && p.deactivatedDaysAgo === undefined)!
  const admin = DEMO_PEOPLE.find((p) => p.role === 'admin')!
  let runId: string | null = null
  let projectId: string | null = null
  for (const [width, height] of SIZES) {
    const { context, page } = await signIn(technician.email, width, height)
    if (!runId) {
      const started = await page.evaluate(async () => {
        const json = async (url: string, init?: RequestInit) => {
          const res = await fetch(url, { headers: { 'Content-Type': 'application/json', Accept: 'application/json' }, ...init })
          if (!res.ok) throw new Error(`${init?.method ?? 'GET'} ${url}: ${res.status} ${await res.text()}`)
          return res.json()
        }
        const projects = (await json('/api/projects')).projects as { id: string; code: string; siteElevationM: number | null }[]
        const ordered = [...projects].sort((a, b) => Number(b.siteElevationM !== null) - Number(a.siteElevationM !== null))
        for (const project of ordered) {
          const equipment = (await json(`/api/projects/${project.id}/equipment`)).equipment as { id: string; kind: string }[]
          const chiller = equipment.find((e) => e.kind === 'centrifugal_chiller')
          if (!chiller) continue
          const template = (await json('/api/templates')).templates.find((t: { key: string }) => t.key === 'centrifugal-chiller-startup')
          const { run } = await json(`/api/equipment/${chiller.id}/runs`, { method: 'POST', body: JSON.stringify({ templateId: template.id }) })
          const ramp = { value: [[0, 0], [4, 14], [8, 29], [12, 36], [20, 37.5], [36, 38], [40, 36.8], [50, 37.4]], unit: 'psid', driveStartS: 36 }
          await json(`/api/runs/${run.id}/readings/oilPressureRamp`, { method: 'PUT', body: JSON.stringify({ changeId: crypto.randomUUID(), baseVersion: 0, entry: ramp }) })
          await json(`/api/runs/${run.id}/readings/capacityControl`, { method: 'PUT', body: JSON.stringify({ changeId: crypto.randomUUID(), baseVersion: 0, entry: { value: 'following' } }) })
          return { runId: run.id as string, projectId: project.id }
        }
        throw new Error('no chiller the technician may run')
      })
      runId = started.runId
      projectId = started.projectId
    }
    for (const step of ['test-conditions', 'prelube']) {
      await page.goto(`${base}/runs/${runId}?step=${step}`, { waitUntil: 'networkidle0' })
      // Acknowledge the step's cautions when the runner asks for it.
      const ack = await page.$('[data-test^=acknowledge]')
      if (ack) await ack.click()
      await new Promise((r) => setTimeout(r, 500))
      await page.screenshot({ path: path.join(out, `${step}-${width}.png`), fullPage: true })
      console.log(`wrote screenshots/${step}-${width}.png`)
    }
    await context.close()
    const a = await signIn(admin.email, width, height)
    await a.page.goto(`${base}/projects/${projectId}`, { waitUntil: 'networkidle0' })
    await a.page.click('[data-test=edit-project]')
    await a.page.waitForSelector('[data-test=project-site-pressure]', { visible: true })
    await new Promise((r) => setTimeout(r, 500))
    await a.page.$eval('[data-test=project-site-pressure]', (el) => el.scrollIntoView({ block: 'center' }))
    await a.page.screenshot({ path: path.join(out, `project-site-${width}.png`) })
    console.log(`wrote screenshots/project-site-${width}.png`)
    await a.context.close()
  }
} finally {
  await browser.close()
}
