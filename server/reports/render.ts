import fs from 'node:fs'
import path from 'node:path'
import Handlebars from 'handlebars'
import type { Browser, BrowserContext } from 'puppeteer-core'
import type { ReportInput } from '@shared/types/report'
import { launchReportBrowser, type BrowserPool } from './browser-pool'
import { qrCodeSvg } from './qr'
import { rampChartSvg } from './ramp-chart'
import { buildReportView } from './view-model'

const ROOT = path.resolve(import.meta.dirname, '../..')
const TEMPLATES_DIR = path.join(ROOT, 'templates')
const FONTS_DIR = path.join(ROOT, 'fonts')

// Subsets and ranges as @fontsource/source-sans-3 declares them.
const LATIN = 'U+0000-00FF,U+0131,U+0152-0153,U+02BB-02BC,U+02C6,U+02DA,U+02DC,U+0304,U+0308,U+0329,U+2000-206F,U+20AC,U+2122,U+2191,U+2193,U+2212,U+2215,U+FEFF,U+FFFD'
const LATIN_EXT = 'U+0100-02BA,U+02BD-02C5,U+02C7-02CC,U+02CE-02D7,U+02DD-02FF,U+0304,U+0308,U+0329,U+1D00-1DBF,U+1E00-1E9F,U+1EF2-1EFF,U+2020,U+20A0-20AB,U+20AD-20C4,U+2113,U+2C60-2C7F,U+A720-A7FF'
const FONT_FILES: Array<{ file: string; weight: number; style: 'normal' | 'italic'; range: string; headerFooter: boolean }> = [
  { file: 'source-sans-3-latin-400-normal.woff2', weight: 400, style: 'normal', range: LATIN, headerFooter: true },
  { file: 'source-sans-3-latin-600-normal.woff2', weight: 600, style: 'normal', range: LATIN, headerFooter: false },
  { file: 'source-sans-3-latin-700-normal.woff2', weight: 700, style: 'normal', range: LATIN, headerFooter: true },
  { file: 'source-sans-3-latin-400-italic.woff2', weight: 400, style: 'italic', range: LATIN, headerFooter: false },
  { file: 'source-sans-3-latin-ext-400-normal.woff2', weight: 400, style: 'normal', range: LATIN_EXT, headerFooter: false },
  { file: 'source-sans-3-latin-ext-600-normal.woff2', weight: 600, style: 'normal', range: LATIN_EXT, headerFooter: false },
  { file: 'source-sans-3-latin-ext-700-normal.woff2', weight: 700, style: 'normal', range: LATIN_EXT, headerFooter: false },
]

interface Compiled {
  hbs: typeof Handlebars
  report: HandlebarsTemplateDelegate
  header: HandlebarsTemplateDelegate
  footer: HandlebarsTemplateDelegate
  styles: string
  fontFaces: string
  headerFooterFontFaces: string
}

let compiled: Compiled | null = null

function fontFaceCss(headerFooterOnly: boolean): string {
  return FONT_FILES.filter((f) => !headerFooterOnly || f.headerFooter)
    .map((f) => {
      const data = fs.readFileSync(path.join(FONTS_DIR, f.file)).toString('base64')
      return `@font-face{font-family:'Source Sans 3';font-style:${f.style};font-weight:${f.weight};font-display:block;src:url(data:font/woff2;base64,${data}) format('woff2');unicode-range:${f.range};}`
    })
    .join('\n')
}

function compile(): Compiled {
  if (compiled) return compiled
  // A private instance: the partials and helpers here never leak into other templates (mail bodies).
  const hbs = Handlebars.create()
  hbs.registerHelper('eq', (a: unknown, b: unknown) => a === b)
  hbs.registerHelper('or', (...args: unknown[]) => args.slice(0, -1).some(Boolean))
  hbs.registerHelper('lower', (s: unknown) => String(s ?? '').toLowerCase())
  // A hash breaks only between groups of 16 hex digits (a <wbr> each), never inside one; copying gives it whole.
  hbs.registerHelper('hashGroups', (s: unknown) => String(s ?? '').match(/.{1,16}/g) ?? [])
  const partialsDir = path.join(TEMPLATES_DIR, 'partials')
  for (const file of fs.readdirSync(partialsDir).filter((f) => f.endsWith('.hbs'))) {
    hbs.registerPartial(path.basename(file, '.hbs'), fs.readFileSync(path.join(partialsDir, file), 'utf8'))
  }
  const read = (name: string) => fs.readFileSync(path.join(TEMPLATES_DIR, name), 'utf8')
  const options = { strict: false, preventIndent: true }
  compiled = {
    hbs,
    report: hbs.compile(read('report.hbs'), options),
    header: hbs.compile(read('partials/page-header.hbs'), options),
    footer: hbs.compile(read('partials/page-footer.hbs'), options),
    styles: read('report.css'),
    fontFaces: fontFaceCss(false),
    headerFooterFontFaces: fontFaceCss(true),
  }
  return compiled
}

/**
 * The handover report as one self-contained HTML document: fonts, chart and QR code inline, nothing to fetch.
 * Every value from the input goes through Handlebars' escaping; only the CSS, the fonts and the two SVG drawings,
 * which this module makes itself, are inserted as markup.
 */
export function renderReportHtml(input: ReportInput): string {
  const c = compile()
  const view = buildReportView(input)
  const safe = (s: string) => new c.hbs.SafeString(s)
  return c.report({
    view,
    fontFaces: safe(c.fontFaces),
    styles: safe(c.styles),
    chartSvg: view.ramp ? safe(rampChartSvg(view.ramp)) : '',
    qrSvg: safe(qrCodeSvg(input.verifyUrl, { sizeMm: 30, title: `Verify report ${input.reportNumber}` })),
  })
}

export type Paper = 'A4' | 'Letter'

export interface PdfOptions {
  paper: Paper
  reportNumber: string
  organizationName?: string
  equipmentTag?: string
  /** A pool (reused browsers) or one browser; without either a browser is launched for this document and closed. */
  browser?: BrowserPool | Browser
  timeoutMs?: number
  /** Called with each URL the page tried to load and was refused. */
  onRequestBlocked?: (url: string) => void
}

export interface PdfResult {
  pdf: Buffer
  /** Every URL the page tried to fetch (all refused: only `data:` URLs load). */
  blockedRequests: string[]
  durationMs: number
}

// Margins leave room for the header and footer, and a wider inner (left) margin for binding.
const MARGINS: Record<Paper, { top: string; bottom: string; left: string; right: string }> = {
  A4: { top: '20mm', bottom: '18mm', left: '25mm', right: '15mm' },
  Letter: { top: '0.8in', bottom: '0.7in', left: '1in', right: '0.6in' },
}

function headerFooter(options: PdfOptions): { headerTemplate: string; footerTemplate: string } {
  const c = compile()
  const margin = MARGINS[options.paper]
  const style =
    `<style>${c.headerFooterFontFaces}\n` +
    `.hf{font-family:'Source Sans 3',sans-serif;font-size:7.5pt;color:#5B6770;width:100%;display:flex;justify-content:space-between;` +
    `padding:0 ${margin.right} 0 ${margin.left};-webkit-print-color-adjust:exact}` +
    `.hf-header{margin-top:8mm;border-bottom:0.2mm solid #DDD3C2;padding-bottom:1.2mm;margin-left:${margin.left};margin-right:${margin.right};padding-left:0;padding-right:0}` +
    `.hf-footer{margin-bottom:7mm;margin-left:${margin.left};margin-right:${margin.right};padding-left:0;padding-right:0}` +
    `.hf strong{color:#0E5E66;font-weight:700}</style>`
  const data = { reportNumber: options.reportNumber, organizationName: options.organizationName ?? '', equipmentTag: options.equipmentTag ?? '' }
  return { headerTemplate: style + c.header(data), footerTemplate: style + c.footer(data) }
}

/** Renders the HTML in a browser context: JavaScript off, every non-`data:` request refused and recorded. */
export async function renderPdfInContext(context: BrowserContext, html: string, options: PdfOptions): Promise<PdfResult> {
  const started = performance.now()
  const timeout = options.timeoutMs ?? 30_000
  const blockedRequests: string[] = []
  const page = await context.newPage()
  try {
    await page.setJavaScriptEnabled(false)
    await page.setRequestInterception(true)
    page.on('request', (request) => {
      const url = request.url()
      if (url.startsWith('data:')) {
        void request.continue().catch(() => undefined)
        return
      }
      blockedRequests.push(url)
      options.onRequestBlocked?.(url)
      void request.abort('blockedbyclient').catch(() => undefined)
    })
    await page.emulateMediaType('print')
    await page.setContent(html, { waitUntil: 'load', timeout })
    await page.evaluate(() => document.fonts.ready.then(() => undefined))
    const pdf = await page.pdf({
      format: options.paper === 'Letter' ? 'letter' : 'a4',
      printBackground: true,
      displayHeaderFooter: true,
      ...headerFooter(options),
      margin: MARGINS[options.paper],
      timeout,
    })
    return { pdf: Buffer.from(pdf), blockedRequests, durationMs: performance.now() - started }
  } finally {
    await page.close().catch(() => undefined)
  }
}

function isPool(b: BrowserPool | Browser | undefined): b is BrowserPool {
  return Boolean(b && typeof (b as BrowserPool).run === 'function' && typeof (b as BrowserPool).stats === 'function')
}

/** The PDF with what the page tried to fetch: through the pool, in a given browser, or in a browser launched for it. */
export async function renderReportPdfDetailed(html: string, options: PdfOptions): Promise<PdfResult> {
  const target = options.browser
  if (isPool(target)) return target.run((context) => renderPdfInContext(context, html, options))
  if (target) {
    const context = await target.createBrowserContext()
    try {
      return await renderPdfInContext(context, html, options)
    } finally {
      await context.close().catch(() => undefined)
    }
  }
  const launched = await launchReportBrowser()
  try {
    const context = await launched.browser.createBrowserContext()
    return await renderPdfInContext(context, html, options)
  } finally {
    await launched.dispose()
  }
}

/** The report HTML as a PDF (A4 or US Letter) with the report number and "page X of Y" on every page. */
export async function renderReportPdf(html: string, options: PdfOptions): Promise<Buffer> {
  return (await renderReportPdfDetailed(html, options)).pdf
}

/** HTML and PDF of a report input in one call, with the refused requests (there should be none). */
export async function renderReport(input: ReportInput, options: { browser?: BrowserPool | Browser; timeoutMs?: number } = {}): Promise<PdfResult & { html: string }> {
  const html = renderReportHtml(input)
  const result = await renderReportPdfDetailed(html, {
    paper: input.paper,
    reportNumber: input.reportNumber,
    organizationName: input.organizationName,
    equipmentTag: input.equipment.tag,
    ...options,
  })
  return { ...result, html }
}
