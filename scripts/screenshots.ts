/**
 * Screenshots of the running product as each role sees it (`npm start` first, then `npm run screenshots`).
 * Writes PNGs to screenshots/ (git-ignored). BASE_URL overrides http://localhost:3000.
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
