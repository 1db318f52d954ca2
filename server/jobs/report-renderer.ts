import path from 'node:path'
import type { Config } from '../config'
import { createBrowserPool, ensureOrganisationCertificate, renderReport, sealPdf, type BrowserPool, type OrganisationSigner } from '../reports'
import type { ReportRenderer } from '../services/report.service'

/** The production renderer: the report through a small reused Chromium pool, then the organisation's seal. */
export function createReportRenderer(config: Config, organizationName: () => Promise<string>): ReportRenderer {
  let pool: BrowserPool | null = null
  let signer: Promise<OrganisationSigner> | null = null
  const identity = () =>
    (signer ??= organizationName().then((name) =>
      ensureOrganisationCertificate(
        config.SEAL_P12_PATH ? { p12Path: config.SEAL_P12_PATH, passphrase: config.SEAL_P12_PASSPHRASE ?? '' } : path.resolve(config.CERT_DIR),
        { organizationName: name },
      ),
    ))
  return {
    async prepare() {
      const id = await identity()
      return { commonName: id.commonName, fingerprintSha256: id.fingerprintSha256, created: id.created, selfSigned: id.selfSigned }
    },
    async render(input) {
      pool ??= createBrowserPool({ size: config.REPORT_BROWSERS, pagesPerBrowser: 2, retries: 1, executablePath: config.CHROMIUM_PATH })
      const sealer = await identity()
      const rendered = await renderReport(input, { browser: pool })
      if (rendered.blockedRequests.length) {
        // Printed user text never reaches the network (every request is refused); note it for the archive record.
        console.warn(`report ${input.reportNumber}: ${rendered.blockedRequests.length} network request(s) refused while rendering`)
      }
      const pdf = await sealPdf(rendered.pdf, sealer, { reason: `Start-up report ${input.reportNumber} issued and sealed`, location: input.project.siteName })
      return {
        pdf,
        sealInfo: {
          commonName: sealer.commonName,
          organizationName: sealer.organizationName,
          fingerprintSha256: sealer.fingerprintSha256,
          selfSigned: sealer.selfSigned,
          notAfter: sealer.notAfter.toISOString(),
          renderMs: Math.round(rendered.durationMs),
          blockedRequests: rendered.blockedRequests.length,
        },
      }
    },
    async close() {
      await pool?.close()
      pool = null
    },
  }
}
