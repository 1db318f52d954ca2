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
  await shoot('sign-in')
  await shoot('admin', 'dana.whitlock@tallowmere.test', ['/people', '/account'])
  await shoot('technician', 'rafe.okafor@tallowmere.test')
  await shoot('owner_rep', 'maren.solvik@vexleyhealth.test')
  await shoot('contractor', 'theo.brannick@pellworthmech.test')
  console.log(`screenshots in ${out}: ${fs.readdirSync(out).join(', ')}`)
} finally {
  await browser.cleanup()
}
