import type { TestProject } from 'vitest/node'
import { launchChromium } from '../helpers/browser'

declare module 'vitest' {
  export interface ProvidedContext {
    /** The DevTools address of the one Chromium every browser test connects to (each page in a context of its own). */
    browserWSEndpoint: string
  }
}

/**
 * Launches Debian's Chromium once for all browser test files; `startProduct()` connects to it and closes only the
 * browser contexts it opened. Launching it per file cost a second or two each and a process per worker.
 */
export default async function setup(project: TestProject) {
  const browser = await launchChromium({ pipe: false })
  project.provide('browserWSEndpoint', browser.wsEndpoint())
  return () => browser.cleanup()
}
