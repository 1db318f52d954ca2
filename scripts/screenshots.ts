/**
 * Screenshots of the running product as each role sees it (`npm start` first, then `npm run screenshots`).
 * Writes PNGs to screenshots/ (git-ignored). BASE_URL overrides http://localhost:3000.
 */
import fs from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import { DEMO_PEOPLE } from '../server/db/demo-data'
import { launchChromium } from '../tests/helpers/browser'

// A small valid PNG standing in for a drawn signature in the prepared runs.
const SIGNATURE = `data:image/png;base64,iVBORw0KGgoAAAANSUhEUgAAABAAAAAQCAYAAAAf8/9hAAAAQ0lEQVR42mNkYPhfz0AEYBxVSF+FDAwM/4kxgGQDGBkZ/hNjAMkGMDIy/CfGAJINYGRk+E+MASQbwMjI8J8YA0g2AADmdwgRvY7J2wAAAABJRU5ErkJggg==`

const base = process.env.BASE_URL ?? 'http://localhost:3000'
const out = path.resolve(import.meta.dirname, '..', 'screenshots')
fs.mkdirSync(out, { recursive: true })

const browser = await launchChromium()
try {
  const width = Number(process.env.WIDTH ?? 1280)
  const height = Number(process.env.HEIGHT ?? 860)
  const shoot = async (name: string, email?: string, extra: string[] = []) => {
    const context = await browser.createBrowserContext()
    const page = await context.newPage()
    await page.setViewport({ width, height })
    await page.goto(`${base}/sign-in`, { waitUntil: 'networkidle0' })
    if (!email) {
      await page.screenshot({ path: path.join(out, `${name}.png`) })
      await context.close()
      return
    }
    const person = DEMO_PEOPLE.find((p) => p.email === email)!
    await page.type('input[data-test=email]', person.email)
    await page.type('input[data-test=password]', person.password)
    await Promise.all([page.waitForNavigation({ waitUntil: 'networkidle0' }).catch(() => undefined), page.click('[data-test=sign-in]')])
    await page.waitForNetworkIdle()
    await page.screenshot({ path: path.join(out, `${name}.png`) })
    for (const route of extra) {
      await page.goto(`${base}${route}`, { waitUntil: 'networkidle0' })
      await page.screenshot({ path: path.join(out, `${name}${route.replace(/\//g, '-')}.png`) })
    }
    await context.close()
  }
  const shootProject = async () => {
    const context = await browser.createBrowserContext()
    const page = await context.newPage()
    await page.setViewport({ width, height })
    const admin = DEMO_PEOPLE.find((p) => p.role === 'admin')!
    await page.goto(`${base}/sign-in`, { waitUntil: 'networkidle0' })
    await page.type('input[data-test=email]', admin.email)
    await page.type('input[data-test=password]', admin.password)
    await Promise.all([page.waitForNavigation({ waitUntil: 'networkidle0' }).catch(() => undefined), page.click('[data-test=sign-in]')])
    const ids = await page.evaluate(async () => {
      const projects = (await (await fetch('/api/projects')).json()).projects as { id: string; code: string }[]
      const project = projects.find((p) => p.code === 'VXH-CUP') ?? projects[0]
      const equipment = (await (await fetch(`/api/projects/${project.id}/equipment`)).json()).equipment as { id: string }[]
      return { project: project.id, equipment: equipment[0]?.id }
    })
    await page.goto(`${base}/projects/${ids.project}`, { waitUntil: 'networkidle0' })
    await page.screenshot({ path: path.join(out, 'admin-project.png'), fullPage: true })
    if (ids.equipment) {
      // A nameplate photo for the picture: an invented plate drawn by the browser itself.
      const plate = await browser.newPage()
      await plate.setViewport({ width: 640, height: 400 })
      await plate.setContent(`<body style="margin:0;background:#8a8f94;display:grid;place-items:center;height:100vh;font-family:sans-serif">
        <div style="background:#d9dcdf;border:6px solid #555;border-radius:8px;padding:18px 26px;width:520px;color:#222">
        <div style="font-weight:700;font-size:22px;letter-spacing:2px">HALVARD THERMAL</div><hr>
        <div>MODEL HT-C500 &nbsp; SERIAL HX-24-0311</div><div>REFRIGERANT R-134a &nbsp; CHARGE 1450 lb</div>
        <div>460 V 3 PH 60 Hz &nbsp; RLA 420 A &nbsp; LRA 2650 A</div><div>DESIGN WORKING PRESSURE 185 psig</div><div>YEAR 2024</div></div></body>`)
      const png = await plate.screenshot({ type: 'png' })
      await plate.close()
      await page.evaluate(async (id: string, b64: string) => {
        const bytes = Uint8Array.from(atob(b64), (c) => c.charCodeAt(0))
        const form = new FormData()
        form.append('photo', new File([bytes], 'ch-1-nameplate.png', { type: 'image/png' }))
        await fetch(`/api/equipment/${id}/nameplate-photo`, { method: 'PUT', body: form })
      }, ids.equipment, Buffer.from(png).toString('base64'))
      await page.goto(`${base}/equipment/${ids.equipment}`, { waitUntil: 'networkidle0' })
      await page.screenshot({ path: path.join(out, 'admin-equipment.png'), fullPage: true })
      await page.click('[data-test=edit-equipment]')
      await page.waitForSelector('[data-test=save-equipment]', { visible: true })
      await new Promise((r) => setTimeout(r, 400))
      await page.screenshot({ path: path.join(out, 'admin-equipment-edit.png') })
    }
    // The template library: the starter chiller template, a draft with one changed limit, and the diff between them.
    const template = await page.evaluate(async () => {
      const list = (await (await fetch('/api/templates')).json()).templates as { id: string; key: string; draftNumber: number | null }[]
      const chillerTemplate = list.find((t) => t.key === 'centrifugal-chiller-startup')!
      if (!chillerTemplate.draftNumber) {
        const draft = (await (await fetch(`/api/templates/${chillerTemplate.id}/versions`, { method: 'POST', headers: { 'Content-Type': 'application/json' }, body: '{}' })).json()).version
        const definition = draft.definition
        const oil = definition.sections.flatMap((s: { steps: { fields: { id: string; rule?: Record<string, number> }[] }[] }) => s.steps.flatMap((st) => st.fields)).find((f: { id: string }) => f.id === 'oilTempRunning')
        if (oil?.rule) oil.rule.max = 160
        await fetch(`/api/templates/${chillerTemplate.id}/versions/${draft.number}`, { method: 'PUT', headers: { 'Content-Type': 'application/json' }, body: JSON.stringify({ definition }) })
        return { id: chillerTemplate.id, draft: draft.number as number }
      }
      return { id: chillerTemplate.id, draft: chillerTemplate.draftNumber }
    })
    for (const [name, route] of [
      ['admin-templates', '/templates'],
      ['admin-template', `/templates/${template.id}`],
      ['admin-template-editor', `/templates/${template.id}/versions/${template.draft}/edit`],
      ['admin-template-diff', `/templates/${template.id}/diff?from=1&to=${template.draft}`],
      ['admin-outbox', '/outbox'],
    ] as const) {
      await page.goto(`${base}${route}`, { waitUntil: 'networkidle0' })
      await page.screenshot({ path: path.join(out, `${name}.png`) })
    }
    await context.close()
  }
  /** A signed-in page of its own for one demo person. */
  const session = async (role: string, email?: string, size = { width, height }) => {
    const person = DEMO_PEOPLE.find((p) => (email ? p.email === email : p.role === role))!
    const context = await browser.createBrowserContext({ downloadBehavior: { policy: 'allow', downloadPath: downloads } })
    const page = await context.newPage()
    // tsx keeps function names with a helper the page does not have; functions passed to evaluate() need it there.
    await page.evaluateOnNewDocument('globalThis.__name = (f) => f')
    await page.setViewport(size)
    await page.goto(`${base}/sign-in`, { waitUntil: 'networkidle0' })
    await page.type('input[data-test=email]', person.email)
    await page.type('input[data-test=password]', person.password)
    await Promise.all([page.waitForNavigation({ waitUntil: 'networkidle0' }).catch(() => undefined), page.click('[data-test=sign-in]')])
    return { page, context, person }
  }
  const downloads = fs.mkdtempSync(path.join(os.tmpdir(), 'startproof-screenshots-'))

  /**
   * The archive needs issued reports: when the demo's hospital project has fewer than three, the technician runs the chiller
   * start-up on CH-1 (all pass) and twice on CH-2 (first with a failed oil temperature and an open finding, then a re-test
   * that supersedes it), signing each, and the owner's representative accepts them; then the reports are awaited.
   */
  const prepareArchive = async () => {
    const tech = await session('technician')
    const existing = await tech.page.evaluate(async () => (await (await fetch('/api/archive?limit=1')).json()).total as number)
    if (existing >= 3) {
      await tech.context.close()
      return
    }
    const rep = await session('owner_rep')
    const plan = [
      { tag: 'CH-1', oilTemp: 128, finding: null },
      { tag: 'CH-2', oilTemp: 171, finding: 'Oil sump temperature above the limit at full load; oil cooler water valve found throttled. Manufacturer’s service to inspect the oil cooler before the warranty walk-down.' },
      { tag: 'CH-2', oilTemp: 131, finding: null },
    ]
    for (const step of plan) {
      const runId = await tech.page.evaluate(
        async (step: { tag: string; oilTemp: number; finding: string | null }, password: string, signature: string) => {
          const json = async (url: string, init?: RequestInit) => {
            const res = await fetch(url, { headers: { 'Content-Type': 'application/json', Accept: 'application/json' }, ...init })
            if (!res.ok) throw new Error(`${init?.method ?? 'GET'} ${url}: ${res.status} ${await res.text()}`)
            return res.json()
          }
          const put = (url: string, body: unknown) => json(url, { method: 'PUT', body: JSON.stringify(body) })
          const project = (await json('/api/projects')).projects.find((p: { code: string }) => p.code === 'VXH-CUP')
          const chiller = (await json(`/api/projects/${project.id}/equipment`)).equipment.find((e: { tag: string }) => e.tag === step.tag)
          const template = (await json('/api/templates')).templates.find((t: { key: string }) => t.key === 'centrifugal-chiller-startup')
          const { run } = await json(`/api/equipment/${chiller.id}/runs`, { method: 'POST', body: JSON.stringify({ templateId: template.id }) })
          for (const section of run.definition.sections)
            for (const s of section.steps)
              if (s.id !== 'oil-running') await put(`/api/runs/${run.id}/steps/${s.id}`, { changeId: crypto.randomUUID(), baseVersion: 0, notApplicable: true, naReason: 'Covered by the factory test record' })
          await put(`/api/runs/${run.id}/readings/oilPressureRunning`, { changeId: crypto.randomUUID(), baseVersion: 0, entry: { value: 36, unit: 'psid' } })
          await put(`/api/runs/${run.id}/readings/oilTempRunning`, { changeId: crypto.randomUUID(), baseVersion: 0, entry: { value: step.oilTemp, unit: 'degF' } })
          if (step.finding)
            await json(`/api/runs/${run.id}/findings`, { method: 'POST', body: JSON.stringify({ stepId: 'oil-running', fieldId: 'oilTempRunning', severity: 'major', description: step.finding }) })
          const { review } = await json(`/api/runs/${run.id}/review`)
          await json(`/api/runs/${run.id}/sign`, { method: 'POST', body: JSON.stringify({ meaning: 'performed_by', password, signatureImage: signature, snapshotSha256: review.snapshotSha256 }) })
          return run.id as string
        },
        step,
        tech.person.password,
        SIGNATURE,
      )
      await rep.page.evaluate(
        async (runId: string, password: string, signature: string) => {
          const review = (await (await fetch(`/api/runs/${runId}/review`)).json()).review
          const res = await fetch(`/api/runs/${runId}/sign`, {
            method: 'POST',
            headers: { 'Content-Type': 'application/json' },
            body: JSON.stringify({ meaning: 'accepted_by', password, signatureImage: signature, snapshotSha256: review.snapshotSha256 }),
          })
          if (!res.ok) throw new Error(`accept ${runId}: ${res.status} ${await res.text()}`)
          // The next report of the same chiller must come later to supersede this one.
          for (let i = 0; i < 120; i++) {
            const report = (await (await fetch(`/api/runs/${runId}/report`)).json()).report
            if (report?.status === 'ready') return
            if (report?.status === 'failed') throw new Error(`report of ${runId} failed: ${report.lastError}`)
            await new Promise((r) => setTimeout(r, 1000))
          }
          throw new Error(`report of ${runId} was not ready within two minutes`)
        },
        runId,
        rep.person.password,
        SIGNATURE,
      )
    }
    await tech.context.close()
    await rep.context.close()
  }

  /** The contractor's archive (wide and portrait tablet), an export, the project's closeout section and dialog, and Verify answers. */
  const shootArchive = async () => {
    for (const size of [{ width, height, suffix: '' }, { width: 768, height: 1024, suffix: '-768' }]) {
      const { page, context } = await session('contractor', undefined, size)
      // A project and chiller with a re-test, so the filtered list shows a superseded report beside its successor.
      const ids = await page.evaluate(async () => {
        const { items } = await (await fetch('/api/archive?limit=100')).json()
        const superseded = items.find((i: { supersededBy: string | null }) => i.supersededBy)
        if (superseded) return { project: superseded.projectId as string, ch2: superseded.equipmentId as string }
        const facets = await (await fetch('/api/archive/facets')).json()
        const project = facets.projects.find((p: { code: string }) => p.code === 'VXH-CUP')
        const ch2 = facets.equipment.find((e: { tag: string; projectId: string }) => e.tag === 'CH-2' && e.projectId === project.id)
        return { project: project.id as string, ch2: (ch2?.id ?? '') as string }
      })
      await page.goto(`${base}/archive`, { waitUntil: 'networkidle0' })
      await page.screenshot({ path: path.join(out, `contractor-archive${size.suffix}.png`) })
      // Filtered to one project and one chiller: the superseded report shows its tag linking to the re-test.
      await page.goto(`${base}/archive?project=${ids.project}${ids.ch2 ? `&equipment=${ids.ch2}` : ''}`, { waitUntil: 'networkidle0' })
      await page.waitForSelector('[data-test=archive-item]')
      await page.screenshot({ path: path.join(out, `contractor-archive-filtered${size.suffix}.png`), fullPage: true })
      if (!size.suffix) {
        // A bad date in a bookmarked link: the 400 names the field.
        await page.goto(`${base}/archive?from=2026-02-30`, { waitUntil: 'networkidle0' })
        await page.waitForSelector('[data-test=archive-error]')
        await page.screenshot({ path: path.join(out, 'contractor-archive-bad-date.png') })
        // Two reports selected and exported; the page shows the package arriving, then saved.
        await page.goto(`${base}/archive?project=${ids.project}`, { waitUntil: 'networkidle0' })
        await page.waitForSelector('[data-test=archive-item]')
        const numbers = await page.$$eval('[data-test=archive-item]', (els) => els.map((el) => el.getAttribute('data-report')!).slice(0, 2))
        for (const n of numbers) await page.click(`[data-test="select-${n}"]`)
        await page.click('[data-test=export-selected]')
        await page.waitForSelector('[data-test=download-progress]')
        await page.screenshot({ path: path.join(out, 'contractor-archive-export-pending.png') })
        await page.waitForSelector('[data-test=download-progress][data-state=done], [data-test=download-progress][data-state=failed]', { timeout: 60_000 })
        await page.screenshot({ path: path.join(out, 'contractor-archive-export-done.png') })
      }
      // The project page: closeout documents (one attached for the picture when there is none) and the Attach dialog filled in.
      await page.evaluate(async (projectId: string) => {
        const { documents } = await (await fetch(`/api/projects/${projectId}/closeout-documents`)).json()
        if (documents.length) return
        const form = new FormData()
        form.append('title', 'CH-1 and CH-2 warranty letter, 5-year compressor and motor')
        form.append('category', 'warranty')
        form.append('documentDate', new Date(Date.now() - 3 * 86400_000).toISOString().slice(0, 10))
        const pdf = '%PDF-1.4\n1 0 obj<</Type/Catalog/Pages 2 0 R>>endobj\n2 0 obj<</Type/Pages/Kids[]/Count 0>>endobj\ntrailer<</Root 1 0 R>>\n%%EOF\n'
        form.append('file', new File([pdf], 'warranty-letter-ch1-ch2.pdf', { type: 'application/pdf' }))
        await fetch(`/api/projects/${projectId}/closeout-documents`, { method: 'POST', body: form })
      }, ids.project)
      await page.goto(`${base}/projects/${ids.project}`, { waitUntil: 'networkidle0' })
      await page.screenshot({ path: path.join(out, `contractor-project-closeout${size.suffix}.png`), fullPage: true })
      await page.click('[data-test=attach-document]')
      await page.waitForSelector('[data-test=closeout-submit]', { visible: true })
      await page.type('input[data-test=closeout-title]', 'CH-2 refrigerant leak test certificate')
      await page.click('[data-test=closeout-submit]')
      await new Promise((r) => setTimeout(r, 400))
      await page.screenshot({ path: path.join(out, `contractor-project-attach-dialog${size.suffix}.png`) })
      await context.close()
    }
  }

  /** The public Verify page: the genuine report as downloaded, and the same report with one byte changed. */
  const shootVerify = async () => {
    const { page, context } = await session('contractor')
    const pdf = await page.evaluate(async () => {
      const { items } = await (await fetch('/api/archive?limit=5')).json()
      const current = items.find((i: { supersededBy: string | null }) => !i.supersededBy) ?? items[0]
      const bytes = new Uint8Array(await (await fetch(current.downloadUrl)).arrayBuffer())
      let s = ''
      for (let i = 0; i < bytes.length; i += 0x8000) s += String.fromCharCode(...bytes.subarray(i, i + 0x8000))
      return btoa(s)
    })
    await context.close()
    const genuine = Buffer.from(pdf, 'base64')
    const altered = Buffer.from(genuine)
    // Change one byte in the middle of the page content; neither the seal nor the archived SHA-256 matches any more.
    const at = Math.floor(altered.length / 3)
    altered[at] = altered[at] ^ 0x01
    for (const [name, bytes] of [['verify-genuine', genuine], ['verify-altered', altered]] as const) {
      const file = path.join(downloads, `${name}.pdf`)
      fs.writeFileSync(file, bytes)
      const visitor = await browser.createBrowserContext()
      const p = await visitor.newPage()
      await p.setViewport({ width, height })
      await p.goto(`${base}/verify`, { waitUntil: 'networkidle0' })
      const input = await p.waitForSelector('input[data-test=verify-file]')
      await (input as unknown as { uploadFile(file: string): Promise<void> }).uploadFile(file)
      await p.waitForSelector('[data-test=verify-answer], [data-test=verify-error]', { timeout: 30_000 })
      await p.screenshot({ path: path.join(out, `${name}.png`), fullPage: true })
      await visitor.close()
    }
  }

  await prepareArchive()
  await shootArchive()
  await shootVerify()
  fs.rmSync(downloads, { recursive: true, force: true })
  await shootProject()
  await shoot('sign-in')
  await shoot('admin', 'dana.whitlock@tallowmere.test', ['/people', '/account'])
  await shoot('technician', 'rafe.okafor@tallowmere.test')
  await shoot('owner_rep', 'maren.solvik@vexleyhealth.test')
  await shoot('contractor', 'theo.brannick@pellworthmech.test')
  console.log(`screenshots in ${out}: ${fs.readdirSync(out).join(', ')}`)
} finally {
  await browser.cleanup()
}
