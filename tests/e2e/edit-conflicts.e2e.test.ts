import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Page } from 'puppeteer-core'
import { SIGNATURE } from '../helpers/runs'
import { bodyText, demoPerson, freshPage, signIn, startProduct, type RunningProduct } from '../helpers/product'

let product: RunningProduct

beforeAll(async () => {
  product = await startProduct('startproof_e2e_edit_conflicts')
}, 400_000)

afterAll(() => product?.stop())

const sel = (test: string) => `[data-test="${test}"]`

/** A JSON call with the page's session. */
function api<T>(page: Page, method: string, url: string, body?: unknown): Promise<T> {
  return page.evaluate(
    async (method: string, url: string, body: unknown) => {
      const res = await fetch(url, { method, headers: { 'Content-Type': 'application/json', Accept: 'application/json' }, body: body === undefined ? undefined : JSON.stringify(body) })
      if (!res.ok) throw new Error(`${method} ${url}: ${res.status} ${await res.text()}`)
      return res.status === 204 ? null : res.json()
    },
    method,
    url,
    body,
  ) as Promise<T>
}

async function typeInto(page: Page, selector: string, text: string) {
  await page.click(selector, { count: 3 })
  await page.keyboard.press('Backspace')
  await page.type(selector, text)
}

async function signedIn(role: string): Promise<Page> {
  const page = await freshPage(product)
  const person = demoPerson(role)
  await signIn(product, page, person.email, person.password)
  await page.waitForFunction(() => !location.pathname.startsWith('/sign-in'))
  return page
}

async function hospital(page: Page) {
  const { projects } = await api<{ projects: { id: string; code: string; version: number }[] }>(page, 'GET', '/api/projects')
  return projects.find((p) => p.code === 'VXH-CUP')!
}

async function equipmentOf(page: Page, projectId: string, tag: string) {
  const { equipment } = await api<{ equipment: { id: string; tag: string; version: number }[] }>(page, 'GET', `/api/projects/${projectId}/equipment`)
  return equipment.find((e) => e.tag === tag)!
}

describe('two people editing the same record in the browser', { timeout: 150_000 }, () => {
  it('when a project was changed on another page while the form was open, then saving says so and "Use mine" saves both changes', async () => {
    const page = await signedIn('admin')
    const other = await signedIn('admin')
    const project = await hospital(page)
    await page.goto(`${product.base}/projects/${project.id}`, { waitUntil: 'networkidle0' })
    await page.click(sel('edit-project'))
    await page.waitForSelector(`input${sel('project-name')}`, { visible: true })
    await typeInto(page, `input${sel('project-name')}`, 'Central utility plant, phase 2')

    await api(other, 'PATCH', `/api/projects/${project.id}`, { siteAddress: '400 Test Parkway', version: project.version })
    await page.click(sel('save-project'))
    await page.waitForSelector(sel('edit-conflict'), { visible: true })
    expect(await page.$eval(sel('edit-conflict'), (el) => el.textContent)).toMatch(/You changed the site address at \d\d:\d\d UTC on another page or device; keep theirs or use yours/)

    await page.click(sel('use-mine'))
    await page.waitForSelector('.el-overlay-dialog', { hidden: true })
    await page.waitForFunction(() => document.body.innerText.includes('Central utility plant, phase 2'))
    const saved = (await api<{ project: { name: string; siteAddress: string; version: number } }>(page, 'GET', `/api/projects/${project.id}`)).project
    expect(saved).toMatchObject({ name: 'Central utility plant, phase 2', siteAddress: '400 Test Parkway', version: project.version + 2 })
    await page.browserContext().close()
    await other.browserContext().close()
  })

  it('when an equipment item was changed elsewhere, then "Keep theirs" shows their values and sends nothing of mine', async () => {
    const page = await signedIn('admin')
    const other = await signedIn('admin')
    const project = await hospital(page)
    const item = await equipmentOf(page, project.id, 'CH-1')
    await page.goto(`${product.base}/equipment/${item.id}`, { waitUntil: 'networkidle0' })
    await page.click(sel('edit-equipment'))
    await page.waitForSelector(`input${sel('equipment-serial')}`, { visible: true })
    await typeInto(page, `input${sel('equipment-serial')}`, 'MINE-0001')

    await api(other, 'PATCH', `/api/equipment/${item.id}`, { model: 'Model changed elsewhere', version: item.version })
    await page.click(sel('save-equipment'))
    await page.waitForSelector(sel('edit-conflict'), { visible: true })
    expect(await page.$eval(sel('edit-conflict'), (el) => el.textContent)).toMatch(/changed the model at \d\d:\d\d UTC/)

    await page.click(sel('keep-theirs'))
    await page.waitForFunction(() => (document.querySelector('input[data-test=equipment-serial]') as HTMLInputElement)?.value !== 'MINE-0001')
    const now = (await api<{ equipment: { model: string; serialNumber: string } }>(page, 'GET', `/api/equipment/${item.id}`)).equipment
    expect(now.model).toBe('Model changed elsewhere')
    expect(now.serialNumber).not.toBe('MINE-0001')
    expect(await bodyText(page)).toContain('Model changed elsewhere')
    await page.browserContext().close()
    await other.browserContext().close()
  })

  it('when a nameplate change would void a submitted run’s signature, then the admin sees the run named and confirming returns it to the technician', async () => {
    const tech = await signedIn('technician')
    const techPassword = demoPerson('technician').password
    const runId = await tech.evaluate(
      async (password: string, signatureImage: string) => {
        const json = async (url: string, init?: RequestInit) => {
          const res = await fetch(url, { headers: { 'Content-Type': 'application/json', Accept: 'application/json' }, ...init })
          if (!res.ok) throw new Error(`${init?.method ?? 'GET'} ${url}: ${res.status} ${await res.text()}`)
          return res.json()
        }
        const put = (url: string, body: unknown) => json(url, { method: 'PUT', body: JSON.stringify(body) })
        const { projects } = await json('/api/projects')
        const project = projects.find((p: { code: string }) => p.code === 'VXH-CUP')
        const { equipment } = await json(`/api/projects/${project.id}/equipment`)
        const ch2 = equipment.find((e: { tag: string }) => e.tag === 'CH-2')
        const { templates } = await json('/api/templates')
        const template = templates.find((t: { key: string }) => t.key === 'centrifugal-chiller-startup')
        const { run } = await json(`/api/equipment/${ch2.id}/runs`, { method: 'POST', body: JSON.stringify({ templateId: template.id }) })
        for (const section of run.definition.sections) {
          for (const step of section.steps) {
            if (step.id === 'oil-running') continue
            if (step.safety) { for (const f of step.fields) await put(`/api/runs/${run.id}/readings/${f.id}`, { changeId: crypto.randomUUID(), baseVersion: 0, entry: { value: true } }); continue }
            await put(`/api/runs/${run.id}/steps/${step.id}`, { changeId: crypto.randomUUID(), baseVersion: 0, notApplicable: true, naReason: 'Covered by the factory test record' })
          }
        }
        await put(`/api/runs/${run.id}/readings/oilPressureRunning`, { changeId: crypto.randomUUID(), baseVersion: 0, entry: { value: 36, unit: 'psid' } })
        await put(`/api/runs/${run.id}/readings/oilTempRunning`, { changeId: crypto.randomUUID(), baseVersion: 0, entry: { value: 125, unit: 'degF' } })
        const { review } = await json(`/api/runs/${run.id}/review`)
        await json(`/api/runs/${run.id}/sign`, { method: 'POST', body: JSON.stringify({ meaning: 'performed_by', password, signatureImage, snapshotSha256: review.snapshotSha256 }) })
        return run.id as string
      },
      techPassword,
      SIGNATURE,
    )

    const page = await signedIn('admin')
    const project = await hospital(page)
    const item = await equipmentOf(page, project.id, 'CH-2')
    await page.goto(`${product.base}/equipment/${item.id}`, { waitUntil: 'networkidle0' })
    await page.click(sel('edit-equipment'))
    await page.waitForSelector(`input${sel('equipment-serial')}`, { visible: true })
    await typeInto(page, `input${sel('equipment-serial')}`, 'CH2-REPLACED-PLATE')
    await page.click(sel('save-equipment'))

    await page.waitForSelector(sel(`signed-run-${runId}`), { visible: true })
    const named = await page.$eval(sel(`signed-run-${runId}`), (el) => el.textContent ?? '')
    expect(named).toContain('CH-2')
    expect(named).toContain(`signed by ${demoPerson('technician').displayName}`)
    await page.click(sel('confirm-void'))
    await page.waitForFunction(() => document.body.innerText.includes('returned to the technician'))

    const run = (await api<{ run: { state: string; signatures: { voided: boolean; voidReason: string | null }[] } }>(tech, 'GET', `/api/runs/${runId}`)).run
    expect(run.state).toBe('returned')
    expect(run.signatures[0]).toMatchObject({ voided: true, voidReason: `Voided: the serial number of CH-2 was changed by ${demoPerson('admin').displayName} after signing` })
    await page.browserContext().close()
    await tech.browserContext().close()
  })
})
