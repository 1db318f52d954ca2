import fs from 'node:fs'
import path from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { HTTPRequest, Page } from 'puppeteer-core'
import type { RunDetail } from '../../shared/types/run'
import { DEMO_PEOPLE } from '../../server/db/demo-data'
import { freshPage, signIn, signOutFromMenu, startProduct, type RunningProduct } from '../helpers/product'

let product: RunningProduct

beforeAll(async () => {
  product = await startProduct('startproof_e2e_offline_author')
}, 120_000)

afterAll(() => product?.stop())

// Two technicians of the hospital plant project sharing one tablet.
const rafe = DEMO_PEOPLE.find((p) => p.email === 'rafe.okafor@tallowmere.test')!
const ines = DEMO_PEOPLE.find((p) => p.email === 'ines.marlow@tallowmere.test')!
// Condenser readings Rafe takes with no connection (CH-1: 85 → 94.3 °F at 1500 gpm).
const OFFLINE: Record<string, number> = { cwEntering: 85, cwLeaving: 94.3, cwFlow: 1500 }

const sel = (test: string) => `[data-test="${test}"]`

async function typeInto(page: Page, selector: string, text: string) {
  await page.waitForSelector(selector, { visible: true })
  // On a tablet the step's navigation bar stays at the foot of the screen: a field is typed into where it can be seen.
  await page.$eval(selector, (el) => el.scrollIntoView({ block: 'center' }))
  await page.click(selector, { count: 3 })
  await page.keyboard.press('Backspace')
  await page.type(selector, text)
}

async function api<T>(page: Page, url: string): Promise<T> {
  return page.evaluate(async (u: string) => {
    const res = await fetch(u)
    return { status: res.status, body: await res.json() }
  }, url) as Promise<T>
}

const getRun = async (page: Page, runId: string) => (await api<{ status: number; body: { run: RunDetail } }>(page, `/api/runs/${runId}`)).body.run
const readingEvents = async (page: Page, runId: string) =>
  (await api<{ status: number; body: { events: { actor: string | null; action: string; target: string }[] } }>(page, `/api/runs/${runId}/audit`)).body.events.filter((e) => e.action === 'reading.set')

/** The keys of this browser's kept run copies (`ownerId/runId`). */
const keptRuns = (page: Page) =>
  page.evaluate(
    () =>
      new Promise<string[]>((resolve, reject) => {
        const open = indexedDB.open('startproof-runs')
        open.onerror = () => reject(open.error)
        open.onsuccess = () => {
          const db = open.result
          const req = db.transaction('runs').objectStore('runs').getAllKeys()
          req.onsuccess = () => {
            db.close()
            resolve((req.result as string[]).sort())
          }
          req.onerror = () => reject(req.error)
        }
      }),
  )

const waitingText = (page: Page) => page.$$eval(sel('waiting-author'), (els) => els.map((el) => el.textContent?.trim() ?? ''))

describe('offline changes on a shared tablet keep their author', { timeout: 180_000 }, () => {
  it('when a technician signs out with changes unsent and another signs in, then they are sent only when the first signs in again, under their name', async () => {
    const page = await freshPage(product)
    await page.setViewport({ width: 820, height: 1180 })
    const sent: { who: string; path: string; body: Record<string, unknown> }[] = []
    let phase = 'rafe'
    page.on('request', (req) => {
      if (req.method() === 'PUT' && /^\/api\/runs\/[^/]+\/(readings|steps)\//.test(new URL(req.url()).pathname)) {
        sent.push({ who: phase, path: new URL(req.url()).pathname, body: JSON.parse(req.postData() ?? '{}') })
      }
    })

    // Rafe starts the CH-1 run and opens the condenser step.
    await signIn(product, page, rafe.email, rafe.password)
    await page.waitForSelector(sel('my-runs'))
    const rafeId = (await api<{ body: { user: { id: string } } }>(page, '/api/session')).body.user.id
    const equipmentId = await page.evaluate(async () => {
      const { projects } = await (await fetch('/api/projects')).json()
      const project = projects.find((p: { code: string }) => p.code === 'VXH-CUP')
      const { equipment } = await (await fetch(`/api/projects/${project.id}/equipment`)).json()
      return equipment.find((e: { tag: string }) => e.tag === 'CH-1').id as string
    })
    await page.goto(`${product.base}/equipment/${equipmentId}`, { waitUntil: 'networkidle0' })
    await page.click(sel('start-run'))
    await page.waitForSelector(`${sel('confirm-start-run')}:not([disabled])`, { visible: true })
    await page.click(sel('confirm-start-run'))
    await page.waitForFunction(() => /^\/runs\/[0-9a-f-]{36}$/.test(location.pathname))
    const runId = new URL(page.url()).pathname.split('/')[2]
    await page.goto(`${product.base}/runs/${runId}?step=condenser`, { waitUntil: 'networkidle0' })
    await page.waitForSelector(sel('step-condenser'))
    if (await page.$(sel('acknowledge-cautions'))) await page.click(sel('acknowledge-cautions'))
    const rafeCookies = (await page.browserContext().cookies()).map((c) => `${c.name}=${c.value}`).join('; ')

    // The server cannot be reached (every /api call fails, the app's own files still load): the readings are kept.
    const abortApi = (req: HTTPRequest) => (new URL(req.url()).pathname.startsWith('/api/') ? req.abort('internetdisconnected') : req.continue())
    await page.setRequestInterception(true)
    page.on('request', abortApi)
    for (const [id, value] of Object.entries(OFFLINE)) await typeInto(page, `input${sel(`input-${id}`)}`, String(value))
    await page.waitForFunction(() => /Offline — 3 changes kept on this device/.test(document.querySelector('[data-test=run-save-label]')?.textContent ?? ''), { timeout: 15_000 })

    // Sign-out with no connection signs out on the tablet; the sign-in page says whose changes wait.
    await signOutFromMenu(page)
    await page.waitForSelector(sel('waiting-author'))
    expect(await waitingText(page)).toEqual(['3 changes by Rafe Okafor are waiting on this device; they are sent when that person signs in again.'])
    expect(await page.evaluate(() => localStorage.getItem('startproof:sign-out-pending'))).not.toBeNull()
    // Rafe's copy of the run stays only because his changes to it wait.
    expect(await keptRuns(page)).toEqual([`${rafeId}/${runId}`])
    const shots = process.env.E2E_SCREENSHOTS
    if (shots) {
      fs.mkdirSync(shots, { recursive: true })
      await page.screenshot({ path: path.join(shots, 'sign-in-waiting-820.png'), fullPage: true })
      await page.setViewport({ width: 390, height: 844 })
      await page.screenshot({ path: path.join(shots, 'sign-in-waiting-390.png'), fullPage: true })
      await page.setViewport({ width: 820, height: 1180 })
    }

    // Back online, Ines signs in on the same tablet: Rafe's sign-in is ended on the server first.
    page.off('request', abortApi)
    await page.setRequestInterception(false)
    phase = 'ines'
    await signIn(product, page, ines.email, ines.password)
    await page.waitForSelector(sel('my-runs'))
    const old = await fetch(`${product.base}/api/session`, { headers: { Cookie: rafeCookies } })
    expect(old.status).toBe(401)

    // Ines opens the run: she sees the server's values, not Rafe's unsent ones, and her own reading goes under her name.
    await page.goto(`${product.base}/runs/${runId}?step=condenser`, { waitUntil: 'networkidle0' })
    await page.waitForSelector(`input${sel('input-cwEntering')}`)
    for (const id of Object.keys(OFFLINE)) expect(await page.$eval(`input${sel(`input-${id}`)}`, (el) => (el as HTMLInputElement).value), id).toBe('')
    await page.goto(`${product.base}/runs/${runId}?step=evaporator`, { waitUntil: 'networkidle0' })
    await typeInto(page, `input${sel('input-chwEntering')}`, '54')
    await page.waitForFunction(() => document.querySelector('[data-test=run-save-state]')?.getAttribute('data-tone') === 'saved', { timeout: 15_000 })
    await new Promise((r) => setTimeout(r, 2500))
    expect(sent.filter((s) => s.who === 'ines').map((s) => [s.path.split('/').pop(), s.body.authorId])).toEqual([['chwEntering', expect.any(String)]])
    const asInes = await getRun(page, runId)
    expect(asInes.readings.chwEntering.updatedByName).toBe('Ines Marlow')
    for (const id of Object.keys(OFFLINE)) expect(asInes.readings[id], id).toMatchObject({ entry: null, version: 0, updatedByName: null })
    expect((await readingEvents(page, runId)).map((e) => [e.actor, e.target])).toEqual([['Ines Marlow', `${runId}/chwEntering`]])

    await signOutFromMenu(page)
    await page.waitForSelector(sel('waiting-author'))
    expect(await waitingText(page)).toEqual(['3 changes by Rafe Okafor are waiting on this device; they are sent when that person signs in again.'])
    expect(await keptRuns(page)).toEqual([`${rafeId}/${runId}`])

    // Rafe signs in again: his changes go at once, under his name, without opening the run.
    phase = 'rafe again'
    await signIn(product, page, rafe.email, rafe.password)
    await page.waitForSelector(sel('my-runs'))
    await page.waitForFunction(
      async (id: string, fields: string[]) => {
        const { run } = await (await fetch(`/api/runs/${id}`)).json()
        return fields.every((f) => run.readings[f].updatedByName === 'Rafe Okafor')
      },
      { timeout: 20_000, polling: 500 },
      runId,
      Object.keys(OFFLINE),
    )
    const after = await getRun(page, runId)
    for (const [id, value] of Object.entries(OFFLINE)) expect(after.readings[id].entry, id).toEqual({ value, unit: id === 'cwFlow' ? 'gpm' : 'degF' })
    expect(after.readings.chwEntering.updatedByName).toBe('Ines Marlow')
    expect(sent.filter((s) => s.who === 'rafe again').map((s) => s.body.authorId)).toEqual([rafeId, rafeId, rafeId])
    expect((await readingEvents(page, runId)).map((e) => [e.actor, e.target.split('/')[1]])).toEqual([
      ['Ines Marlow', 'chwEntering'],
      ['Rafe Okafor', 'cwEntering'],
      ['Rafe Okafor', 'cwLeaving'],
      ['Rafe Okafor', 'cwFlow'],
    ])

    // Nothing waits any more, so nothing of Rafe's is kept once he signs out.
    await signOutFromMenu(page)
    await page.waitForSelector('.sign-in[data-waiting-read=true]')
    expect(await page.$(sel('waiting-changes'))).toBeNull()
    expect(await keptRuns(page)).toEqual([])
    await page.browserContext().close()
  })
})
