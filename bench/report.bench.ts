// Renders the sample handover report N times warm (one pooled browser reused) and cold (a browser launched for each
// document), then seals it, and prints medians and peak memory. Run: tsx bench/report.bench.ts [N]
import fs from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import { createBrowserPool, ensureOrganisationCertificate, renderReportHtml, renderReportPdfDetailed, sealPdf } from '../server/reports'
import { sampleReportInput } from '../tests/fixtures/sample-report'

const runs = Math.max(1, Number(process.argv[2] ?? 10))

const median = (xs: number[]) => {
  const s = [...xs].sort((a, b) => a - b)
  const m = Math.floor(s.length / 2)
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2
}
const ms = (x: number) => `${x.toFixed(0)} ms`
const mb = (kb: number) => `${(kb / 1024).toFixed(0)} MB`

/** Memory (kB) of a process and all its descendants: proportional set size, so pages shared between Chromium's processes count once. */
function treeMemoryKb(rootPid: number): number {
  const children = new Map<number, number[]>()
  const rss = new Map<number, number>()
  for (const entry of fs.readdirSync('/proc')) {
    if (!/^\d+$/.test(entry)) continue
    try {
      const status = fs.readFileSync(`/proc/${entry}/status`, 'utf8')
      const ppid = Number(status.match(/^PPid:\s+(\d+)/m)?.[1])
      rss.set(Number(entry), Number(status.match(/^VmRSS:\s+(\d+)/m)?.[1] ?? 0))
      children.set(ppid, [...(children.get(ppid) ?? []), Number(entry)])
    } catch {
      // the process ended while we looked
    }
  }
  let total = 0
  const stack = [rootPid]
  while (stack.length) {
    const pid = stack.pop() as number
    let pss: number | null = null
    try {
      pss = Number(fs.readFileSync(`/proc/${pid}/smaps_rollup`, 'utf8').match(/^Pss:\s+(\d+)/m)?.[1])
    } catch {
      pss = null
    }
    total += pss ?? rss.get(pid) ?? 0
    stack.push(...(children.get(pid) ?? []))
  }
  return total
}

async function main() {
  const input = sampleReportInput()
  const options = { paper: input.paper, reportNumber: input.reportNumber, organizationName: input.organizationName, equipmentTag: input.equipment.tag }

  const htmlTimes: number[] = []
  for (let i = 0; i < runs; i++) {
    const t = performance.now()
    renderReportHtml(input)
    htmlTimes.push(performance.now() - t)
  }
  const html = renderReportHtml(input)

  const pool = createBrowserPool({ size: 1 })
  let browserPeakKb = 0
  const sampler = setInterval(() => {
    for (const pid of pool.processIds()) browserPeakKb = Math.max(browserPeakKb, treeMemoryKb(pid))
  }, 25)
  let pdf: Buffer = Buffer.alloc(0)
  let pages = 0
  const warm: number[] = []
  try {
    await renderReportPdfDetailed(html, { ...options, browser: pool })
    for (let i = 0; i < runs; i++) {
      const t = performance.now()
      const result = await renderReportPdfDetailed(renderReportHtml(input), { ...options, browser: pool })
      warm.push(performance.now() - t)
      if (result.blockedRequests.length) throw new Error(`The report tried to fetch ${result.blockedRequests.join(', ')}`)
      pdf = result.pdf
    }
    pages = (pdf.toString('latin1').match(/\/Type\s*\/Page[^s]/g) ?? []).length
  } finally {
    clearInterval(sampler)
    await pool.close()
  }

  const cold: number[] = []
  for (let i = 0; i < runs; i++) {
    const t = performance.now()
    await renderReportPdfDetailed(renderReportHtml(input), options)
    cold.push(performance.now() - t)
  }

  const certDir = fs.mkdtempSync(path.join(os.tmpdir(), 'startproof-bench-certs-'))
  const seal: number[] = []
  try {
    const signer = await ensureOrganisationCertificate(certDir, { organizationName: input.organizationName })
    for (let i = 0; i < runs; i++) {
      const t = performance.now()
      await sealPdf(pdf, signer)
      seal.push(performance.now() - t)
    }
  } finally {
    fs.rmSync(certDir, { recursive: true, force: true })
  }

  const nodePeakKb = process.resourceUsage().maxRSS
  console.log(`Sample report: ${pages} pages, ${(pdf.length / 1024).toFixed(0)} kB, ${runs} runs each`)
  console.log(`  HTML (templates, chart, QR)      median ${ms(median(htmlTimes))}`)
  console.log(`  PDF warm (pooled browser)        median ${ms(median(warm))}  (min ${ms(Math.min(...warm))}, max ${ms(Math.max(...warm))})`)
  console.log(`  PDF cold (browser launched)      median ${ms(median(cold))}  (min ${ms(Math.min(...cold))}, max ${ms(Math.max(...cold))})`)
  console.log(`  Seal (PKCS#7, RSA-2048)          median ${ms(median(seal))}`)
  console.log(`  Peak memory: Node RSS ${mb(nodePeakKb)}, pooled Chromium process tree ${mb(browserPeakKb)} (PSS)`)
}

main().catch((err) => {
  console.error(err)
  process.exit(1)
})
