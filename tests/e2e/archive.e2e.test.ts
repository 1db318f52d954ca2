import { createHash } from 'node:crypto'
import fs from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Page } from 'puppeteer-core'
import type { ArchiveItem, ArchivePage } from '@shared/types/archive'
import { demoPerson, signIn, startProduct, type RunningProduct } from '../helpers/product'
import { unzip } from '../helpers/zip'
import { SIGNATURE } from '../helpers/runs'

let product: RunningProduct
let downloads: string

beforeAll(async () => {
  // The demo data replays three years of start-ups, so starting takes a while.
  product = await startProduct('startproof_e2e_archive')
  downloads = fs.mkdtempSync(path.join(os.tmpdir(), 'startproof-e2e-archive-downloads-'))
}, 400_000)

afterAll(async () => {
  await product?.stop()
  if (downloads) fs.rmSync(downloads, { recursive: true, force: true })
})

const sel = (test: string) => `[data-test="${test}"]`
const sha256 = (data: Buffer) => createHash('sha256').update(data).digest('hex')

/** A page in a browser context of its own whose downloads land in `folder`. */
async function pageSavingTo(folder: string): Promise<Page> {
  fs.mkdirSync(folder, { recursive: true })
  const context = await product.browser.createBrowserContext({ downloadBehavior: { policy: 'allow', downloadPath: folder } })
  const page = await context.newPage()
  await page.setViewport({ width: 1180, height: 820 })
  return page
}

/** Waits for one finished download in `folder` (Chromium writes `.crdownload` until the last byte) and reads it. */
async function downloaded(folder: string, timeout = 60_000): Promise<{ name: string; data: Buffer }> {
  const until = Date.now() + timeout
  while (Date.now() < until) {
    const done = fs.readdirSync(folder).filter((f) => !f.endsWith('.crdownload'))
    if (done.length && !fs.readdirSync(folder).some((f) => f.endsWith('.crdownload'))) {
      return { name: done[0], data: fs.readFileSync(path.join(folder, done[0])) }
    }
    await new Promise((r) => setTimeout(r, 100))
  }
  throw new Error(`no download arrived in ${folder} within ${timeout} ms`)
}

/**
 * Through the API with the pages' sessions: the technician runs the chiller start-up on CH-2 (every step not applicable with a
 * reason but the running oil checks, both passing) and signs as performer; the owner's representative accepts; then the
 * sealed report is awaited. The sign-off test drives these same steps through the pages.
 */
async function acceptedRun(tech: Page, rep: Page, tag: string): Promise<string> {
  const runId = await tech.evaluate(
    async (tag: string, password: string, signature: string) => {
      const json = async (url: string, init?: RequestInit) => {
        const res = await fetch(url, { headers: { 'Content-Type': 'application/json', Accept: 'application/json' }, ...init })
        if (!res.ok) throw new Error(`${init?.method ?? 'GET'} ${url}: ${res.status} ${await res.text()}`)
        return res.json()
      }
      const put = (url: string, body: unknown) => json(url, { method: 'PUT', body: JSON.stringify(body) })
      const project = (await json('/api/projects')).projects.find((p: { code: string }) => p.code === 'VXH-CUP')
      const chiller = (await json(`/api/projects/${project.id}/equipment`)).equipment.find((e: { tag: string }) => e.tag === tag)
      const template = (await json('/api/templates')).templates.find((t: { key: string }) => t.key === 'centrifugal-chiller-startup')
      const { run } = await json(`/api/equipment/${chiller.id}/runs`, { method: 'POST', body: JSON.stringify({ templateId: template.id }) })
      for (const section of run.definition.sections)
        for (const step of section.steps)
          if (step.safety) for (const f of step.fields) await put(`/api/runs/${run.id}/readings/${f.id}`, { changeId: crypto.randomUUID(), baseVersion: 0, entry: { value: true } })
          else if (step.id !== 'oil-running') await put(`/api/runs/${run.id}/steps/${step.id}`, { changeId: crypto.randomUUID(), baseVersion: 0, notApplicable: true, naReason: 'Covered by the factory test record' })
      await put(`/api/runs/${run.id}/readings/oilPressureRunning`, { changeId: crypto.randomUUID(), baseVersion: 0, entry: { value: 36, unit: 'psid' } })
      await put(`/api/runs/${run.id}/readings/oilTempRunning`, { changeId: crypto.randomUUID(), baseVersion: 0, entry: { value: 125, unit: 'degF' } })
      const { review } = await json(`/api/runs/${run.id}/review`)
      await json(`/api/runs/${run.id}/sign`, { method: 'POST', body: JSON.stringify({ meaning: 'performed_by', password, signatureImage: signature, snapshotSha256: review.snapshotSha256 }) })
      return run.id as string
    },
    tag,
    demoPerson('technician').password,
    SIGNATURE,
  )
  await rep.evaluate(
    async (runId: string, password: string, signature: string) => {
      const review = (await (await fetch(`/api/runs/${runId}/review`)).json()).review
      const res = await fetch(`/api/runs/${runId}/sign`, {
        method: 'POST',
        headers: { 'Content-Type': 'application/json' },
        body: JSON.stringify({ meaning: 'accepted_by', password, signatureImage: signature, snapshotSha256: review.snapshotSha256 }),
      })
      if (!res.ok) throw new Error(`accept: ${res.status} ${await res.text()}`)
      for (let i = 0; i < 1800; i++) {
        const report = (await (await fetch(`/api/runs/${runId}/report`)).json()).report
        if (report?.status === 'ready') return
        if (report?.status === 'failed') throw new Error(`report failed: ${report.lastError}`)
        await new Promise((r) => setTimeout(r, 100))
      }
      throw new Error('the report was not ready within three minutes')
    },
    runId,
    demoPerson('owner_rep').password,
    SIGNATURE,
  )
  return runId
}

/** Picks an option of an Element Plus select by the words it shows. */
async function choose(page: Page, select: string, words: string) {
  await page.click(sel(select))
  await page.waitForFunction(
    (w: string) => [...document.querySelectorAll('.el-select-dropdown__item')].some((o) => (o as HTMLElement).offsetParent && o.textContent?.includes(w)),
    {},
    words,
  )
  await page.evaluate((w: string) => {
    const option = [...document.querySelectorAll('.el-select-dropdown__item')].find((o) => (o as HTMLElement).offsetParent && o.textContent?.includes(w)) as HTMLElement
    option.click()
  }, words)
}

/** A one-page PDF small enough to write here; the server checks that its bytes are a PDF. */
const CLOSEOUT_PDF = Buffer.from(
  '%PDF-1.4\n1 0 obj<</Type/Catalog/Pages 2 0 R>>endobj\n2 0 obj<</Type/Pages/Kids[3 0 R]/Count 1>>endobj\n3 0 obj<</Type/Page/Parent 2 0 R/MediaBox[0 0 612 792]>>endobj\ntrailer<</Root 1 0 R>>\n%%EOF\n',
)

describe('the archive in the browser', { timeout: 240_000 }, () => {
  it('when a report is issued, then the contractor finds it by tag, downloads the sealed PDF, attaches a closeout document, exports the project package with every listed file, and the PDF verifies as genuine and current', async () => {
    const tech = await pageSavingTo(path.join(downloads, 'tech'))
    const rep = await pageSavingTo(path.join(downloads, 'rep'))
    await signIn(product, tech, demoPerson('technician').email, demoPerson('technician').password)
    await tech.waitForSelector(sel('my-runs'))
    await signIn(product, rep, demoPerson('owner_rep').email, demoPerson('owner_rep').password)
    await rep.waitForSelector(sel('awaiting-acceptance'))
    // CH-1 first, then CH-2: the search must pick CH-2's report out of these and the demo's.
    await acceptedRun(tech, rep, 'CH-1')
    const runId = await acceptedRun(tech, rep, 'CH-2')
    await tech.browserContext().close()
    await rep.browserContext().close()

    // The contractor opens Archive from the navigation and searches by equipment tag.
    const contractor = demoPerson('contractor')
    const pdfFolder = path.join(downloads, 'pdf')
    const page = await pageSavingTo(pdfFolder)
    await signIn(product, page, contractor.email, contractor.password)
    await page.waitForSelector('nav a[href="/archive"]', { visible: true })
    await Promise.all([page.waitForSelector(sel('archive-total')), page.click('nav a[href="/archive"]')])
    await page.waitForFunction(() => /^\d[\d,]* reports?$/.test(document.querySelector('[data-test=archive-total]')?.textContent?.trim() ?? ''))
    const answer = page.waitForResponse((res) => res.url().includes('/api/archive?') && res.url().includes('q=CH-2'))
    await page.type(`input${sel('archive-search')}`, 'CH-2')
    const found = (await (await answer).json()) as ArchivePage
    expect(new URL(page.url()).searchParams.get('q')).toBe('CH-2')
    // Newest first: the report just issued leads the list (the demo's older start-ups follow it).
    const item = found.items[0] as ArchiveItem
    expect(item).toMatchObject({ runId, equipmentTag: 'CH-2', projectCode: 'VXH-CUP', supersededBy: null })
    const countWords = `${found.total.toLocaleString('en-US')} report${found.total === 1 ? '' : 's'} match`
    await page.waitForFunction((w: string) => document.querySelector('[data-test=archive-total]')?.textContent?.startsWith(w), {}, countWords)
    const firstRow = await page.$eval(sel('archive-list'), (el) => (el.querySelector('.el-table__row') as HTMLElement).innerText)
    expect(firstRow).toContain(item.reportNumber)
    expect(firstRow).toContain('CH-2')
    expect(firstRow).toContain(item.serialNumber)
    expect(firstRow).toContain('All pass')

    // The search survives a reload: it lives in the URL.
    await page.reload({ waitUntil: 'networkidle0' })
    await page.waitForFunction((w: string) => document.querySelector('[data-test=archive-total]')?.textContent?.startsWith(w), {}, countWords)
    expect(await page.$eval(`input${sel('archive-search')}`, (el) => (el as HTMLInputElement).value)).toBe('CH-2')

    // Download the PDF from its row: the bytes are the archived ones.
    expect(await page.$eval(sel(`download-${item.reportNumber}`), (el) => el.getAttribute('href'))).toBe(item.downloadUrl)
    await page.click(sel(`download-${item.reportNumber}`))
    const pdf = await downloaded(pdfFolder)
    expect(pdf.data.subarray(0, 5).toString()).toBe('%PDF-')
    expect(sha256(pdf.data)).toBe(item.sha256)

    // A closeout document attached through the project page's dialog; a missing category is refused on its field first.
    const projectId = item.projectId
    await page.goto(`${product.base}/projects/${projectId}`, { waitUntil: 'networkidle0' })
    await page.click(sel('attach-document'))
    await page.waitForSelector(sel('closeout-submit'), { visible: true })
    await page.type(`input${sel('closeout-title')}`, 'CH-2 refrigerant leak test certificate')
    const certificate = path.join(downloads, 'leak-test-certificate.pdf')
    fs.writeFileSync(certificate, CLOSEOUT_PDF)
    const picker = await page.$(`input${sel('closeout-file')}`)
    await (picker as unknown as { uploadFile(file: string): Promise<void> }).uploadFile(certificate)
    await page.click(sel('closeout-submit'))
    await page.waitForFunction(() => /Category is required/.test(document.querySelector('[data-test=closeout-category-item]')?.textContent ?? ''))
    await choose(page, 'closeout-category', 'Test certificate')
    await page.click(sel('closeout-submit'))
    await page.waitForFunction(() => /CH-2 refrigerant leak test certificate/.test(document.querySelector('[data-test=closeout-documents]')?.textContent ?? ''), { timeout: 15_000 })
    const docText = await page.$eval(sel('closeout-documents'), (el) => (el as HTMLElement).innerText)
    expect(docText).toContain('TEST CERTIFICATE')
    expect(docText).toContain('leak-test-certificate.pdf')
    expect(docText).toContain(contractor.displayName)

    // The project's handover package from the Archive with the project chosen in its menu.
    const zipFolder = path.join(downloads, 'zip')
    await page.browserContext().close()
    const exporter = await pageSavingTo(zipFolder)
    await signIn(product, exporter, contractor.email, contractor.password)
    await exporter.waitForSelector('nav a[href="/archive"]', { visible: true })
    await exporter.goto(`${product.base}/archive`, { waitUntil: 'networkidle0' })
    await choose(exporter, 'archive-project', 'VXH-CUP')
    await exporter.waitForFunction((id: string) => new URL(location.href).searchParams.get('project') === id, {}, projectId)
    await exporter.waitForSelector(sel('archive-closeout'))
    await exporter.waitForFunction(() => /CH-2 refrigerant leak test certificate/.test(document.querySelector('[data-test=archive-closeout]')?.textContent ?? ''))
    await exporter.click(sel('export-project'))
    await exporter.waitForSelector(`${sel('download-progress')}[data-state=done]`, { timeout: 90_000 })
    expect(await exporter.$eval(sel('download-progress-text'), (el) => el.textContent)).toMatch(/saved .+\.zip/)
    const zip = await downloaded(zipFolder)
    expect(zip.name).toMatch(/\.zip$/)
    const entries = await unzip(zip.data)
    const manifest = JSON.parse(entries.get('manifest.json')!.toString('utf8')) as {
      format: string
      files: { path: string; sha256: string; sizeBytes: number }[]
      reports: { reportNumber: string }[]
      closeoutDocuments: { title: string }[]
    }
    expect(manifest.format).toBe('startproof-handover')
    expect(manifest.files.length).toBeGreaterThan(3)
    for (const file of manifest.files) {
      const data = entries.get(file.path)
      expect(data, `${file.path} is listed in manifest.json`).toBeDefined()
      expect(sha256(data!), file.path).toBe(file.sha256)
      expect(data!.length, file.path).toBe(file.sizeBytes)
    }
    // SHA256SUMS lists every other file too.
    const sums = entries.get('SHA256SUMS')!.toString('utf8').trim().split('\n')
    for (const line of sums) {
      const [, hash, name] = /^([0-9a-f]{64}) [ *](.+)$/.exec(line) ?? []
      expect(hash, line).toBeDefined()
      expect(entries.has(name), `${name} is listed in SHA256SUMS`).toBe(true)
      expect(sha256(entries.get(name)!), name).toBe(hash)
    }
    expect(entries.get(`reports/${item.reportNumber}.pdf`)?.equals(pdf.data)).toBe(true)
    expect(manifest.reports.map((r) => r.reportNumber)).toContain(item.reportNumber)
    expect(manifest.closeoutDocuments.map((d) => d.title)).toContain('CH-2 refrigerant leak test certificate')
    expect([...entries.values()].some((data) => data.equals(CLOSEOUT_PDF))).toBe(true)
    await exporter.browserContext().close()

    // Anyone given the downloaded PDF checks it on the public Verify page.
    const file = path.join(downloads, 'downloaded-report.pdf')
    fs.writeFileSync(file, pdf.data)
    const visitor = await product.browser.createBrowserContext()
    const verify = await visitor.newPage()
    await verify.goto(`${product.base}/verify`, { waitUntil: 'networkidle0' })
    const drop = await verify.waitForSelector(`input${sel('verify-file')}`)
    await (drop as unknown as { uploadFile(file: string): Promise<void> }).uploadFile(file)
    const verdict = await verify.waitForSelector(sel('verify-answer'), { timeout: 30_000 })
    expect(await verdict!.evaluate((el) => el.getAttribute('data-outcome'))).toBe('genuine_current')
    const verdictText = await verdict!.evaluate((el) => (el as HTMLElement).innerText)
    expect(verdictText).toContain('Genuine and current')
    expect(verdictText).toContain(item.reportNumber)
    // A number typed from a paper copy (in lower case) proves only that the report was issued: it says so.
    await verify.type(`input${sel('verify-number')}`, item.reportNumber.toLowerCase())
    await verify.click(sel('verify-number-go'))
    await verify.waitForFunction(() => !document.querySelector('[data-test=verify-answer] .reasons')?.textContent?.includes('byte for byte'))
    const byNumber = await verify.waitForSelector(sel('verify-answer'))
    const byNumberText = await byNumber!.evaluate((el) => (el as HTMLElement).innerText)
    expect(byNumberText).toContain('Issued and current')
    expect(byNumberText).toContain('No file was compared')
    expect(byNumberText).toMatch(/\d{4}-\d{2}-\d{2} \d{2}:\d{2} C[SD]T/)
    await visitor.close()
  })
})
