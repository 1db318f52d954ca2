import { emptyProgress } from '@shared/record'
import { execFileSync, spawnSync } from 'node:child_process'
import fs from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { pumpStartupDefinition } from '@shared/library'
import { evaluateChecklist } from '@shared/rules'
import type { AnyDesignPoint } from '@shared/schemas/design-point'
import type { ReportInput } from '@shared/types/report'
import type { RunReading } from '@shared/types/run'
import {
  BrowserPoolClosedError,
  createBrowserPool,
  ensureOrganisationCertificate,
  renderPdfInContext,
  renderReportHtml,
  renderReportPdf,
  renderReportPdfDetailed,
  sealPdf,
  verifySealedPdf,
  type BrowserPool,
  type OrganisationSigner,
} from '../../server/reports'
import { sampleReportInput } from '../fixtures/sample-report'
import { buildReportView } from '../../server/reports/view-model'

// One browser pool for the whole file; the fixture is the sample chiller run (one fail, one marginal, two findings,
// a voided signature and two valid ones) with hostile text put into a note, a finding and a signer's role.

const HOSTILE_NOTE = 'Gauge checked against the reference. <script>alert(1)</script> Manual: http://example.test/manual.pdf <img src="http://example.test/x.png">'
const HOSTILE_ROLE = 'Owner’s representative <b onmouseover="alert(2)">witness</b>'

const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'startproof-report-test-'))

function fixture(paper: 'A4' | 'Letter' = 'A4'): ReportInput {
  const input = sampleReportInput({ paper })
  input.run.steps['oil-running'].note = HOSTILE_NOTE
  input.run.findings[1].resolution = 'Cap fitted <iframe src="http://example.test/frame"></iframe> and checked.'
  input.signatures[2].role = HOSTILE_ROLE
  return input
}

function tool(name: string, args: string[]): string {
  return execFileSync(name, args, { encoding: 'utf8' })
}

function writePdf(name: string, pdf: Buffer): string {
  const file = path.join(tmp, name)
  fs.writeFileSync(file, pdf)
  return file
}

/** pdfsig exits non-zero for a broken signature; its findings are on stdout either way. */
function pdfsig(file: string): string {
  const result = spawnSync('pdfsig', [file], { encoding: 'utf8' })
  return `${result.stdout}${result.stderr}`
}

const flat = (s: string) => s.replace(/\s+/g, ' ')
/** Without any white space: the PDF's text may break a line anywhere a browser would wrap. */
const squash = (s: string) => s.replace(/\s+/g, '')

let pool: BrowserPool
let input: ReportInput
let html: string
let pdfFile: string
let text: string
let blocked: string[]

beforeAll(async () => {
  pool = createBrowserPool({ size: 1 })
  input = fixture()
  html = renderReportHtml(input)
  const result = await renderReportPdfDetailed(html, { paper: 'A4', reportNumber: input.reportNumber, organizationName: input.organizationName, equipmentTag: input.equipment.tag, browser: pool })
  blocked = result.blockedRequests
  pdfFile = writePdf('report-a4.pdf', result.pdf)
  text = flat(tool('pdftotext', [pdfFile, '-']))
}, 60_000)

afterAll(async () => {
  await pool?.close()
  fs.rmSync(tmp, { recursive: true, force: true })
})

describe('an SI report of the same start-up', () => {
  // COP = 3.516 853 / (kW/ton) (NIST SP 811 App. B.8; docs/REFERENCES.md §Units): the SI reader sees efficiency as COP,
  // its limit turned into a minimum, and the water-side method and site atmosphere named with the design table.
  const siHtml = renderReportHtml(sampleReportInput({ unitSystem: 'SI' }))
  const siText = siHtml.replace(/<[^>]+>/g, ' ').replace(/\s+/g, ' ')
  it('when the project is SI, then efficiency prints as COP with a minimum, and no kW/ton is left', () => {
    // 279 kW over 500.4 tons (1759.8 kW of cooling): COP 6.31; design 0.576 kW/ton is COP 6.11, its limit COP 5.81.
    expect(siText).toMatch(/Efficiency 6\.3\d? COP/)
    expect(siText).toContain('At least 5.81 COP')
    expect(siText).toMatch(/not below design ÷ 1\.05/)
    // The only kW/ton left names the unit the AHRI tolerance is stated on.
    expect(siText.replace(/is 5 % on kW\/ton/g, '')).not.toMatch(/kW\/ton/)
  })
  it('when the project is SI, then the test conditions and the water-side method are printed with the design table', () => {
    expect(siText).toContain('Water-side heat: flow × density × specific heat × temperature difference, with the properties of water at the mean water temperature (IAPWS-IF97).')
    expect(siText).toMatch(/Load during the running readings: 100\.1 % of design capacity/)
  })
})

describe('handover report PDF', () => {
  it('when rendered, then the text holds the equipment tag, key readings with units, verdict words, findings and both signers', () => {
    expect(text).toContain('CH-2')
    expect(text).toContain('Water-cooled centrifugal chiller')
    expect(text).toContain('Vexley General Hospital')
    expect(text).toContain('HX-24-0312')
    // Capacity from 1185 gpm × 10.1 °F with IF97 water properties at the mean 49.25 °F: 500.4 tons (the 500 rule gave 498.7).
    for (const reading of ['500.4 tons', '0.558 kW/ton', '100.1 % of design capacity', 'Capacity control during the readings: at full capacity', '468 V', '402 A', '1185 gpm', '54.3 °F', '44.2 °F', '2.2 °F', '0.9 %', '279 kW', '38.1 psid', '8.6 s', '11.1 s', '20.9 s', '19.1 ft of water', '30 h']) {
      expect(text, reading).toContain(reading)
    }
    for (const word of ['Pass', 'Marginal', 'FAIL']) expect(text).toContain(word)
    expect(text).toContain('High condenser trip: deviation from the setting 3.5 % is above the maximum 3 %')
    expect(text).toContain('High condenser pressure cutout tripped at 155.2 psig')
    expect(text).toContain('Vent valve cap missing on the condenser leaving water box.')
    expect(text).toMatch(/Major.*Open/)
    expect(text).toMatch(/Heat balance 2 ?%/) // (1759.9 + 279 − 1998) / 1998 with IF97 water properties on both sides
    expect(text).toContain('At least 35 psid (design 35 psid, 0 %)') // never "−0 %"
    expect(text).not.toMatch(/−0(?![.\d])/)
    expect(text).toMatch(/Minor.*Resolved/)
    expect(text).toContain('Rafe Okafor')
    expect(text).toContain('Maren Solvik')
    expect(text).toContain('Performed by')
    expect(text).toContain('Accepted by')
    expect(text).toContain('VOIDED')
    expect(text).toContain('2026-12-01 22:42 UTC')
    expect(text).toContain('2026-12-01 16:42 CST')
    expect(text).toContain(input.signatures[2].snapshotSha256.slice(0, 32))
  })

  it('when rendered, then every report section is there, with the cautions and the statement that the checklist does not replace the manufacturer', () => {
    for (const heading of [
      'Start-up and commissioning report', 'Summary of verdicts', 'Design versus measured', 'Start-sequence timings', 'Electrical balance', 'Water side',
      'Safety control functional tests', 'Owner training', 'Findings', 'Photos', 'Maintenance recommendations and cautions', 'Signatures', 'Verification',
    ]) {
      expect(text.toLowerCase(), heading).toContain(heading.toLowerCase())
    }
    expect(text).toContain('Time to the oil pressure setpoint (35 psid)')
    expect(text).toContain('Lowest oil pressure after reaching the setpoint')
    expect(text).toContain('Lock out and tag out every energy source')
    expect(text).toContain('supports, and does not replace, the manufacturer')
    expect(text).toContain(input.contentSha256.slice(0, 40))
    expect(text).toContain(input.verifyUrl)
  })

  it('when rendered, then the header and footer carry the report number and "page X of Y" on every page', () => {
    const pages = Number(tool('pdfinfo', [pdfFile]).match(/Pages:\s+(\d+)/)?.[1])
    expect(pages).toBeGreaterThan(8)
    for (const n of [1, Math.ceil(pages / 2), pages]) {
      const page = flat(tool('pdftotext', ['-f', String(n), '-l', String(n), pdfFile, '-']))
      expect(page).toContain(`Page ${n} of ${pages}`)
      expect(page).toContain(`Start-up report ${input.reportNumber}`)
    }
  })

  it('when rendered, then only Source Sans 3 is used and every font is embedded', () => {
    const rows = tool('pdffonts', [pdfFile]).trim().split('\n').slice(2)
    expect(rows.length).toBeGreaterThan(0)
    for (const row of rows) {
      expect(row).toMatch(/SourceSans3/)
      const [emb] = row.trim().split(/\s+/).slice(-5)
      expect(emb, row).toBe('yes')
    }
  })

  it('when a note, a resolution and a role hold HTML, script and links, then they print as literal text and nothing is fetched', () => {
    expect(html).not.toContain('<script>alert(1)</script>')
    expect(html).not.toContain('<img src="http://example.test/x.png">')
    expect(html).not.toContain('<iframe')
    expect(html).toContain('&lt;script&gt;alert(1)&lt;/script&gt;')
    for (const literal of ['<script>alert(1)</script>', '<img src="http://example.test/x.png">', 'http://example.test/manual.pdf', '<iframe src="http://example.test/frame"></iframe>', '<b onmouseover="alert(2)">witness</b>']) {
      expect(squash(text), literal).toContain(squash(literal))
    }
    expect(blocked).toEqual([])
  })

  it('when a page does refer to the network, then every request is refused and counted, and its scripts never run', async () => {
    const hostile =
      '<!DOCTYPE html><html><head><link rel="stylesheet" href="https://example.test/a.css"></head><body>' +
      '<p>static text</p><img src="http://example.test/x.png"><script>document.body.textContent = "SCRIPT RAN"</script></body></html>'
    const seen: string[] = []
    const result = await renderReportPdfDetailed(hostile, { paper: 'A4', reportNumber: 'T-1', browser: pool, onRequestBlocked: (url) => seen.push(url) })
    expect(result.blockedRequests).toEqual(expect.arrayContaining(['https://example.test/a.css', 'http://example.test/x.png']))
    expect(seen).toEqual(result.blockedRequests)
    const out = flat(tool('pdftotext', [writePdf('hostile.pdf', result.pdf), '-']))
    expect(out).toContain('static text')
    expect(out).not.toContain('SCRIPT RAN')
  })

  it('when the paper is US Letter, then the pages are Letter; A4 gives A4', async () => {
    expect(tool('pdfinfo', [pdfFile])).toMatch(/Page size:\s+595\.\d+ x 841\.\d+ pts \(A4\)/)
    const letterInput = fixture('Letter')
    // No browser given: one is launched for this document and closed afterwards.
    const letter = await renderReportPdf(renderReportHtml(letterInput), { paper: 'Letter', reportNumber: letterInput.reportNumber })
    expect(tool('pdfinfo', [writePdf('report-letter.pdf', letter)])).toMatch(/Page size:\s+612 x 792 pts \(letter\)/)
  }, 30_000)

  it('when rendered, then the ramp chart is vector SVG and the photos and drawn signatures are embedded images', () => {
    const chart = html.match(/<div class="chart-svg">(<svg[\s\S]*?<\/svg>)<\/div>/)?.[1] ?? ''
    expect(chart).toContain('<path')
    expect(chart).toContain('Setpoint 35 psid')
    expect(chart).toContain('Floor 24.5 psid') // 30 % below the machine's 35 psid setpoint
    expect(chart).toContain('Drive start 32 s')
    expect(chart).toMatch(/Hold 20\.9 s/)
    expect(chart).not.toMatch(/<image|<script|href=/)
    expect(html.match(/<img src="data:image\/png;base64,/g)?.length).toBe(3 + 3)
    const images = tool('pdfimages', ['-list', pdfFile]).trim().split('\n').slice(2)
    expect(images.length).toBeGreaterThanOrEqual(6)
  })
})

describe('any checklist template', () => {
  it('when a run of another template is rendered, then its sections, steps and fields print and the chiller summaries are left out', () => {
    const base = sampleReportInput()
    const designPoint = { voltage: { value: 460, unit: 'V' }, fullLoadAmps: { value: 48, unit: 'A' }, pumpDesignFlow: { value: 0.0757, unit: 'm3ps' }, pumpDesignHead: { value: 254000, unit: 'Pad' }, motorRatedPower: { value: 29828, unit: 'W' }, motorRatedSpeed: { value: 186.4, unit: 'radps' } }
    const evaluations = evaluateChecklist(pumpStartupDefinition, { readings: {}, designPoint: designPoint as unknown as AnyDesignPoint, unitSystem: 'IP' })
    const readings: Record<string, RunReading> = {}
    for (const [fieldId, evaluation] of Object.entries(evaluations)) {
      readings[fieldId] = { fieldId, entry: null, disposition: null, notApplicable: false, naReason: null, justification: null, evaluation, version: 0, updatedAt: null, updatedByName: null }
    }
    // A record from before dispositions: the not-applicable flag alone, on a step that is not the safety step.
    const firstStep = pumpStartupDefinition.sections[0].steps[1]
    readings[firstStep.fields[0].id] = { ...readings[firstStep.fields[0].id], notApplicable: true, naReason: 'Pump <em>not</em> fitted yet' }
    const pumpInput: ReportInput = {
      ...base,
      equipment: { ...base.equipment, tag: 'CHWP-1', kind: 'pump', designPoint },
      run: { ...base.run, definition: pumpStartupDefinition, readings, steps: {}, findings: [], attachments: [], designPoint, progress: { ...emptyProgress(), incomplete: Object.keys(readings).length - 1, notApplicable: 1 } },
      photoDataUrls: {},
    }
    const out = renderReportHtml(pumpInput)
    for (const section of pumpStartupDefinition.sections) expect(out).toContain(section.title)
    expect(out).toContain('Direction of rotation')
    expect(out).toContain('Not applicable: Pump &lt;em&gt;not&lt;/em&gt; fitted yet')
    expect(out).toContain('Required checks without a value')
    expect(out).not.toContain('Start-sequence timings')
    expect(out).not.toContain('Water side')
    expect(out).toContain('No findings were recorded on this run.')
  })
})

describe('organisation seal', () => {
  let signer: OrganisationSigner
  let sealedFile: string

  beforeAll(async () => {
    signer = await ensureOrganisationCertificate(path.join(tmp, 'certs'), { organizationName: 'Tallowmere Commissioning Group' })
    sealedFile = writePdf('sealed.pdf', await sealPdf(fs.readFileSync(pdfFile), signer, { location: 'Marrowick, IL' }))
  }, 30_000)

  it('when first used, then a self-signed RSA-2048 certificate is created once and reused; a .p12 path and passphrase open it; a wrong passphrase is refused', async () => {
    expect(signer.created).toBe(true)
    expect(signer.selfSigned).toBe(true)
    expect(signer.commonName).toBe('Tallowmere Commissioning Group report seal')
    expect((fs.statSync(path.join(tmp, 'certs', 'organisation-seal.passphrase')).mode & 0o777).toString(8)).toBe('600')
    const again = await ensureOrganisationCertificate(path.join(tmp, 'certs'))
    expect(again.created).toBe(false)
    expect(again.fingerprintSha256).toBe(signer.fingerprintSha256)
    const production = await ensureOrganisationCertificate({ p12Path: signer.p12Path, passphrase: signer.passphrase })
    expect(production.fingerprintSha256).toBe(signer.fingerprintSha256)
    await expect(ensureOrganisationCertificate({ p12Path: signer.p12Path, passphrase: 'not-the-passphrase' })).rejects.toThrow(/cannot be opened/)
    await expect(ensureOrganisationCertificate({ p12Path: path.join(tmp, 'missing.p12'), passphrase: 'x' })).rejects.toThrow(/does not exist/)
  })

  it('when sealed, then pdfsig reports a valid signature over the whole document by the organisation', async () => {
    const report = pdfsig(sealedFile)
    expect(report).toContain('Signature #1')
    expect(report).toContain('Signer Certificate Common Name: Tallowmere Commissioning Group report seal')
    expect(report).toContain('Signature Type: adbe.pkcs7.detached')
    expect(report).toContain('Total document signed')
    expect(report).toContain('Signature Validation: Signature is Valid.')
    const verification = await verifySealedPdf(fs.readFileSync(sealedFile))
    expect(verification).toMatchObject({ signed: true, valid: true, altered: false, coversWholeDocument: true })
    expect(flat(tool('pdftotext', [sealedFile, '-']))).toContain('CH-2')
  })

  it('when one byte in the signed range is changed, then pdfsig reports the document as altered', async () => {
    const sealed = fs.readFileSync(sealedFile)
    const range = sealed.toString('latin1').match(/\/ByteRange\s*\[\s*(\d+)\s+(\d+)\s+(\d+)\s+(\d+)\s*\]/)
    expect(range).not.toBeNull()
    const [, , firstLength, secondStart] = range!.map(Number)
    const tampered = Buffer.from(sealed)
    const at = Math.floor(firstLength / 2)
    expect(at).toBeLessThan(secondStart)
    tampered[at] ^= 0x01
    const report = pdfsig(writePdf('tampered.pdf', tampered))
    expect(report).toContain('Signature Validation: Digest Mismatch.')
    expect(report).not.toContain('Signature is Valid')
    expect(await verifySealedPdf(tampered)).toMatchObject({ signed: true, valid: false, altered: true })
  })

  it('when an unsigned PDF is checked, then no signature is reported', async () => {
    expect(await verifySealedPdf(fs.readFileSync(pdfFile))).toMatchObject({ signed: false, valid: false })
  })
})

describe('browser pool', () => {
  const opts = () => ({ paper: 'A4' as const, reportNumber: input.reportNumber })
  const alive = (pid: number) => {
    try {
      process.kill(pid, 0)
      return true
    } catch {
      return false
    }
  }

  it('when the browser is killed in the middle of a render, then it is relaunched and the render retried once', async () => {
    const crashPool = createBrowserPool({ size: 1 })
    try {
      let attempts = 0
      const result = await crashPool.run(async (context, browser) => {
        attempts += 1
        if (attempts === 1) {
          const page = await context.newPage()
          await page.setContent('<p>half way</p>')
          browser.process()!.kill('SIGKILL')
          await page.pdf()
        }
        return renderPdfInContext(context, html, opts())
      })
      expect(attempts).toBe(2)
      expect(result.pdf.subarray(0, 5).toString()).toBe('%PDF-')
      expect(crashPool.stats()).toMatchObject({ launches: 2, retries: 1, completed: 1 })
      expect(crashPool.stats().crashes).toBeGreaterThanOrEqual(1)
    } finally {
      await crashPool.close()
    }
  }, 60_000)

  it('when the pool browser was closed between documents, then the next document relaunches it', async () => {
    const before = pool.stats().launches
    const [pid] = pool.processIds()
    process.kill(pid, 'SIGKILL')
    const pdf = await renderReportPdf(html, { ...opts(), browser: pool })
    expect(pdf.subarray(0, 5).toString()).toBe('%PDF-')
    expect(pool.stats().launches).toBe(before + 1)
    expect(pool.processIds()).not.toContain(pid)
  }, 60_000)

  it('when a task fails on its own, then it is not retried', async () => {
    let attempts = 0
    await expect(
      pool.run(async () => {
        attempts += 1
        throw new Error('template problem')
      }),
    ).rejects.toThrow('template problem')
    expect(attempts).toBe(1)
  })

  it('when more documents arrive than the pool takes, then they wait and at most its capacity run at once', async () => {
    const small = createBrowserPool({ size: 1, pagesPerBrowser: 2 })
    try {
      let running = 0
      let peak = 0
      const task = async () => {
        running += 1
        peak = Math.max(peak, running)
        await new Promise((r) => setTimeout(r, 60))
        running -= 1
      }
      await Promise.all(Array.from({ length: 5 }, () => small.run(task)))
      expect(peak).toBe(2)
      expect(small.stats()).toMatchObject({ completed: 5, active: 0, queued: 0, launches: 1 })
    } finally {
      await small.close()
    }
  }, 30_000)

  it('when closed, then its browsers are gone and new work is refused', async () => {
    const closing = createBrowserPool({ size: 2, pagesPerBrowser: 1 })
    await Promise.all([closing.run(async () => undefined), closing.run(async () => undefined)])
    const pids = closing.processIds()
    expect(pids).toHaveLength(2)
    await closing.close()
    expect(pids.filter(alive)).toEqual([])
    await expect(closing.run(async () => undefined)).rejects.toBeInstanceOf(BrowserPoolClosedError)
  }, 30_000)
})

describe('the report prints what the one counting rule counts (shared/record/counting.ts)', () => {
  it('when a value sits just past a boundary, then it prints with the digits that justify its verdict', () => {
    const input = sampleReportInput()
    const r = input.run.readings.voltageUnbalance
    input.run.readings.voltageUnbalance = {
      ...r,
      evaluation: { ...r.evaluation, verdict: 'marginal', display: { value: 1.002, unit: '%', text: '1 %' }, limits: { display: { max: 2, warnMax: 1, unit: '%' }, canonical: { max: 2, warnMax: 1, unit: '%' } } },
    }
    const view = buildReportView(input)
    const row = view.electrical.find((x) => x.id === 'voltageUnbalance')!
    expect(row.value).toBe('1.002 %')
    expect(row.verdict?.key).toBe('marginal')
  })

  it('when fields have no acceptance criterion, then they print as Recorded and the cover counts them apart from passes', () => {
    const view = buildReportView(sampleReportInput())
    const rows = view.sections.flatMap((s) => s.steps.flatMap((st) => st.fields))
    const recorded = rows.filter((x) => x.verdict?.key === 'recorded')
    expect(recorded.map((x) => x.id)).toEqual(expect.arrayContaining(['inputKw', 'trainingGivenBy']))
    expect(recorded.every((x) => x.verdict?.word === 'Recorded' && x.verdict.judged === false)).toBe(true)
    expect(view.counts.find((c) => c.word === 'Recorded')?.count).toBe(recorded.length + view.handoverTasks.filter((x) => x.verdict?.key === 'recorded').length)
    expect(view.totalsLine).toMatch(/^Of \d+ checks: \d+ pass, \d+ marginal, \d+ fail, \d+ incomplete, \d+ recorded/)
    const html = renderReportHtml(sampleReportInput())
    expect(html).toContain(view.totalsLine)
    expect(html).toContain('I performed this start-up and the readings are true.')
  })
})
