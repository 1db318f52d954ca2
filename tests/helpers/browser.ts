import fs from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import puppeteer, { type Browser } from 'puppeteer-core'

export const CHROMIUM = process.env.CHROMIUM_PATH ?? '/usr/bin/chromium'

/**
 * Debian's Chromium, headless, with a fresh profile and none of its background network traffic. Driven over a pipe by
 * default; `pipe: false` opens a DevTools WebSocket instead, for a browser that other processes connect to.
 */
export async function launchChromium(options: { pipe?: boolean } = {}): Promise<Browser & { cleanup(): Promise<void> }> {
  const userDataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'startproof-chromium-'))
  const browser = await puppeteer.launch({
    executablePath: CHROMIUM,
    headless: true,
    pipe: options.pipe ?? true,
    userDataDir,
    args: [
      '--no-sandbox',
      '--disable-gpu',
      '--disable-quic',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
      '--disable-dev-shm-usage',
    ],
  })
  return Object.assign(browser, {
    async cleanup() {
      await browser.close().catch(() => undefined)
      fs.rmSync(userDataDir, { recursive: true, force: true })
    },
  })
}
