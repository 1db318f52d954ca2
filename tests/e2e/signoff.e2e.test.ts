import { execFileSync, spawnSync } from 'node:child_process'
import fs from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Page } from 'puppeteer-core'
import { bodyText, demoPerson, freshPage, signIn, signOutFromMenu, startProduct, type RunningProduct } from '../helpers/product'

let product: RunningProduct

beforeAll(async () => {
  product = await startProduct('startproof_e2e_signoff')
}, 400_000)

afterAll(() => product?.stop())

const sel = (test: string) => `[data-test="${test}"]`

/**
 * Through the API with the page's session: the technician starts the chiller start-up on a chiller (CH-2 by default), marks every step not
 * applicable with a reason except the running oil checks, and fills those two (36 psid, 125 °F: both pass).
 */
async function prepareSignableRun(page: Page, tag = 'CH-2'): Promise<string> {
  return page.evaluate(async (tag: string) => {
    const json = async (url: string, init?: RequestInit) => {
      const res = await fetch(url, { headers: { 'Content-Type': 'application/json', Accept: 'application/json' }, ...init })
      if (!res.ok) throw new Error(`${init?.method ?? 'GET'} ${url}: ${res.status} ${await res.text()}`)
      return res.json()
    }
    const put = (url: string, body: unknown) => json(url, { method: 'PUT', body: JSON.stringify(body) })
    const { projects } = await json('/api/projects')
    const project = projects.find((p: { code: string }) => p.code === 'VXH-CUP')
    const { equipment } = await json(`/api/projects/${project.id}/equipment`)
    const ch2 = equipment.find((e: { tag: string }) => e.tag === tag)
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
    return run.id as string
  }, tag)
}

/** A looping stroke across the signature canvas with the mouse, as a finger would draw it. */
async function drawSignature(page: Page) {
  const canvas = await page.waitForSelector(sel('signature-canvas'), { visible: true })
  const box = (await canvas!.boundingBox())!
  const x0 = box.x + box.width * 0.12
  const y0 = box.y + box.height * 0.6
  await page.mouse.move(x0, y0)
  await page.mouse.down()
  for (let i = 1; i <= 24; i++) {
    const t = i / 24
    await page.mouse.move(x0 + t * box.width * 0.7, y0 - Math.sin(t * Math.PI * 3) * box.height * 0.25, { steps: 2 })
  }
  await page.mouse.up()
  await page.waitForFunction(() => document.querySelector('[data-test=signature-state]')?.textContent === 'Signature drawn')
}

async function typePassword(page: Page, password: string) {
  const input = `input${sel('sign-password')}`
  await page.waitForSelector(input, { visible: true })
  await page.click(input, { count: 3 })
  await page.keyboard.press('Backspace')
  await page.type(input, password)
}

const passwordError = (page: Page) =>
  page.$eval(sel('sign-password-item'), (el) => el.querySelector('.el-form-item__error')?.textContent?.trim() ?? '').catch(() => '')

describe('sign-off in the browser', { timeout: 150_000 }, () => {
  it('when the technician signs as performer and the owner’s representative accepts, then the sealed report downloads with both signers on it', async () => {
    const started = Date.now()
    const tech = demoPerson('technician')
    const rep = demoPerson('owner_rep')
    const page = await freshPage(product)

    // The technician: a run ready to sign, opened on its review page.
    await signIn(product, page, tech.email, tech.password)
    await page.waitForSelector(sel('my-runs'))
    const runId = await prepareSignableRun(page)
    await page.goto(`${product.base}/runs/${runId}/review`, { waitUntil: 'networkidle0' })
    await page.waitForFunction(() => document.querySelector('[data-test=review-can-sign]')?.textContent === 'Ready to sign.')
    await page.click(sel('sign-performer'))
    await page.waitForSelector(sel('sign-submit'), { visible: true })
    const dialog = await bodyText(page)
    expect(dialog).toContain('I performed this start-up and the readings are true.')
    expect(dialog).toContain(tech.displayName)
    expect(dialog).toContain('CH-2')

    // A wrong password is refused and said on the password field; nothing is signed.
    await drawSignature(page)
    await typePassword(page, 'not-my-password')
    await page.click(sel('sign-submit'))
    await page.waitForFunction(() => /incorrect/i.test(document.querySelector('[data-test=sign-password-item] .el-form-item__error')?.textContent ?? ''), { timeout: 15_000 })
    expect(await passwordError(page)).toMatch(/nothing was signed/)

    await typePassword(page, tech.password)
    await page.click(sel('sign-submit'))
    await page.waitForSelector(sel('signature-performed_by'), { timeout: 15_000 })
    await page.waitForFunction(() => /Submitted for acceptance/.test(document.querySelector('[data-test=review-run-state]')?.textContent ?? ''))
    expect(await page.$(sel('sign-performer'))).toBeNull()

    // Sign out; the owner's representative signs in on the same device.
    await signOutFromMenu(page)
    await signIn(product, page, rep.email, rep.password)

    // Their page lists the run waiting for them; they open it and accept.
    await page.waitForSelector(sel(`open-review-${runId}`), { visible: true, timeout: 15_000 })
    expect(await page.$eval(sel('awaiting-acceptance'), (el) => el.textContent)).toContain('CH-2')
    await page.click(sel(`open-review-${runId}`))
    await page.waitForSelector(sel('sign-accept'), { visible: true, timeout: 15_000 })
    expect(await page.$eval(sel('review-signatures'), (el) => el.textContent)).toContain(tech.displayName)
    await page.click(sel('sign-accept'))
    await page.waitForSelector(sel('sign-submit'), { visible: true })
    expect(await bodyText(page)).toContain('I witnessed and accept this start-up on behalf of the owner.')
    await drawSignature(page)
    await typePassword(page, rep.password)
    await page.click(sel('sign-submit'))

    // The report is prepared by the job queue while the page polls; then it downloads.
    await page.waitForSelector(`${sel('report-status')}[data-status=ready]`, { timeout: 60_000 })
    expect(await page.$eval(sel('review-signatures'), (el) => el.textContent)).toContain(rep.displayName)
    const href = await page.$eval(sel('report-download'), (el) => el.getAttribute('href'))
    expect(href).toBe(`/api/runs/${runId}/report.pdf`)
    const pdfBase64 = await page.evaluate(async (url: string) => {
      const res = await fetch(url)
      if (!res.ok) throw new Error(`report download: ${res.status}`)
      const bytes = new Uint8Array(await res.arrayBuffer())
      let s = ''
      for (let i = 0; i < bytes.length; i += 0x8000) s += String.fromCharCode(...bytes.subarray(i, i + 0x8000))
      return btoa(s)
    }, href!)
    const pdf = Buffer.from(pdfBase64, 'base64')
    expect(pdf.subarray(0, 5).toString()).toBe('%PDF-')
    const shown = await page.$eval(sel('report-sha256'), (el) => el.textContent?.trim())
    const { createHash } = await import('node:crypto')
    expect(createHash('sha256').update(pdf).digest('hex')).toBe(shown)

    const file = path.join(os.tmpdir(), `startproof-e2e-signoff-${runId}.pdf`)
    fs.writeFileSync(file, pdf)
    try {
      const text = execFileSync('pdftotext', ['-layout', file, '-'], { encoding: 'utf8' }).replace(/\s+/g, ' ')
      expect(text).toContain('CH-2')
      expect(text).toContain(tech.displayName)
      expect(text).toContain(rep.displayName)
      expect(text).toContain('Accepted by')
      expect(text).toContain('Performed by')
      expect(execFileSync('pdffonts', [file], { encoding: 'utf8' })).toMatch(/SourceSans3/)
      const sig = spawnSync('pdfsig', [file], { encoding: 'utf8' })
      expect(`${sig.stdout}${sig.stderr}`).toMatch(/Signature is Valid/)

      // Anyone given the PDF can check it on the public Verify page, signed in or not.
      const visitor = await freshPage(product)
      await visitor.goto(`${product.base}/verify`, { waitUntil: 'networkidle0' })
      const picker = await visitor.waitForSelector('input[data-test=verify-file]')
      await (picker as unknown as { uploadFile(path: string): Promise<void> }).uploadFile(file)
      const answer = await visitor.waitForSelector('[data-test=verify-answer]')
      expect(await answer!.evaluate((el) => el.getAttribute('data-outcome'))).toBe('genuine_current')
      const verdictText = await answer!.evaluate((el) => (el as HTMLElement).innerText)
      expect(verdictText).toContain('Genuine and current')
      expect(verdictText).toContain('CH-2')
      await visitor.browserContext().close()
    } finally {
      fs.rmSync(file, { force: true })
    }
    await page.browserContext().close()
    expect(Date.now() - started).toBeLessThan(90_000)
  })

  it('when the owner’s representative returns the run with comments, then it goes back to the technician and the voided signature stays on record with the comments', async () => {
    const tech = demoPerson('technician')
    const rep = demoPerson('owner_rep')
    const techPage = await freshPage(product)
    await signIn(product, techPage, tech.email, tech.password)
    await techPage.waitForSelector(sel('my-runs'))
    const runId = await prepareSignableRun(techPage, 'CH-1')
    await techPage.goto(`${product.base}/runs/${runId}/review`, { waitUntil: 'networkidle0' })
    await techPage.waitForFunction(() => document.querySelector('[data-test=review-can-sign]')?.textContent === 'Ready to sign.')
    await techPage.click(sel('sign-performer'))
    await drawSignature(techPage)
    await typePassword(techPage, tech.password)
    await techPage.click(sel('sign-submit'))
    await techPage.waitForSelector(sel('signature-performed_by'), { timeout: 15_000 })

    const repPage = await freshPage(product)
    await signIn(product, repPage, rep.email, rep.password)
    await repPage.waitForSelector(sel(`open-review-${runId}`), { visible: true, timeout: 15_000 })
    await repPage.click(sel(`open-review-${runId}`))
    await repPage.waitForSelector(sel('return-run'), { visible: true, timeout: 15_000 })
    await repPage.click(sel('return-run'))
    await repPage.waitForSelector(sel('return-submit'), { visible: true })
    // Comments are required: nothing is sent without them.
    await repPage.type(`input${sel('return-password')}`, rep.password)
    await repPage.click(sel('return-submit'))
    await repPage.waitForFunction(() => /Say what must change/.test(document.querySelector('[data-test=return-dialog]')?.textContent ?? document.body.textContent ?? ''))
    const comments = 'Record the running oil pressure again after the oil has warmed up.'
    await repPage.type(`textarea${sel('return-comments')}`, comments)
    await repPage.click(sel('return-submit'))
    await repPage.waitForFunction(() => /Returned for changes/.test(document.querySelector('[data-test=review-run-state]')?.textContent ?? ''), { timeout: 15_000 })
    expect(await repPage.$(sel('sign-accept'))).toBeNull()
    const voided = await repPage.waitForSelector(sel('signature-performed_by-voided'), { timeout: 15_000 })
    const voidText = await voided!.evaluate((el) => el.textContent ?? '')
    expect(voidText).toContain(tech.displayName)
    expect(voidText).toContain('Voided')
    expect(voidText).toContain(comments)

    // The technician sees it back on the review with the performer's button again.
    await techPage.reload({ waitUntil: 'networkidle0' })
    await techPage.waitForSelector(sel('sign-performer'), { visible: true, timeout: 15_000 })
    expect(await techPage.$eval(sel('review-run-state'), (el) => el.textContent)).toContain('Returned for changes')
    await techPage.browserContext().close()
    await repPage.browserContext().close()
  })
})
