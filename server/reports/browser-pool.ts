import fs from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import puppeteer, { type Browser, type BrowserContext } from 'puppeteer-core'

export const CHROMIUM_PATH = process.env.CHROMIUM_PATH ?? '/usr/bin/chromium'

// Chromium flags that work headless on this stack without a sandbox or a GPU (the browser tests use the same base
// set), plus a host resolver that resolves nothing: even a request that escaped the page's interception would find
// no network.
const CHROMIUM_ARGS = [
  '--no-sandbox',
  '--disable-gpu',
  '--disable-quic',
  '--no-first-run',
  '--disable-background-networking',
  '--disable-component-update',
  '--disable-sync',
  '--disable-dev-shm-usage',
  '--disable-extensions',
  '--disable-default-apps',
  '--host-resolver-rules=MAP * ~NOTFOUND',
]

export interface LaunchedBrowser {
  browser: Browser
  /** Closes the browser and removes its throwaway profile. */
  dispose(): Promise<void>
}

/** Debian's Chromium, headless over a pipe, with a fresh profile and none of its background traffic. */
export async function launchReportBrowser(options: { executablePath?: string; timeoutMs?: number } = {}): Promise<LaunchedBrowser> {
  const userDataDir = fs.mkdtempSync(path.join(os.tmpdir(), 'startproof-report-'))
  try {
    const browser = await puppeteer.launch({
      executablePath: options.executablePath ?? CHROMIUM_PATH,
      headless: true,
      pipe: true,
      userDataDir,
      args: CHROMIUM_ARGS,
      timeout: options.timeoutMs ?? 30_000,
      // The server's own shutdown closes the pool; puppeteer's handlers would exit the process first (SIGINT exits
      // with 130 at once), leaving the database of `npm start` running.
      handleSIGINT: false,
      handleSIGTERM: false,
      handleSIGHUP: false,
    })
    return {
      browser,
      async dispose() {
        await browser.close().catch(() => browser.process()?.kill('SIGKILL'))
        // Chromium's helpers may still be writing the profile for a moment after close: retry, and never throw from here.
        await fs.promises.rm(userDataDir, { recursive: true, force: true, maxRetries: 5, retryDelay: 100 }).catch(() => undefined)
      },
    }
  } catch (err) {
    fs.rmSync(userDataDir, { recursive: true, force: true })
    throw err
  }
}

export interface BrowserPoolOptions {
  /** Browsers kept running (default 1). */
  size?: number
  /** Documents rendered at once in one browser, each in its own context (default 2). */
  pagesPerBrowser?: number
  /** Renders waiting for a free place beyond this are refused (default 100). */
  maxQueue?: number
  /** How many times a task is retried after the browser crashed under it (default 1). */
  retries?: number
  executablePath?: string
  launchTimeoutMs?: number
}

export interface BrowserPoolStats {
  size: number
  pagesPerBrowser: number
  /** Browsers started so far, first launches and relaunches together. */
  launches: number
  /** Browsers that went away while the pool had not closed them. */
  crashes: number
  /** Tasks run again after a crash. */
  retries: number
  completed: number
  active: number
  queued: number
}

export interface BrowserPool {
  /**
   * Runs `task` in a fresh browser context (closed afterwards) on one of the pool's browsers, waiting for a free
   * place when all are busy. When the browser crashes or is closed under the task, it is relaunched and the task
   * runs again, up to `retries` times.
   */
  run<T>(task: (context: BrowserContext, browser: Browser) => Promise<T>): Promise<T>
  stats(): BrowserPoolStats
  /** Process ids of the running browsers (for diagnostics, and for tests that kill one). */
  processIds(): number[]
  /** Refuses new work, waits for running tasks (up to `timeoutMs`), closes every browser and removes their profiles. */
  close(timeoutMs?: number): Promise<void>
}

export class BrowserPoolClosedError extends Error {
  constructor() {
    super('The report browser pool is closed')
    this.name = 'BrowserPoolClosedError'
  }
}

interface Slot {
  launched: LaunchedBrowser | null
  launching: Promise<LaunchedBrowser> | null
  active: number
}

const CRASH_MESSAGE = /target closed|session closed|connection closed|browser has disconnected|page crashed|protocol error.*(closed|detached)|frame was detached|browser is closed|not opened|websocket is not open/i

/** True when an error means the browser or its page went away rather than the task failing on its own. */
export function isBrowserCrash(err: unknown, browser: Browser | null): boolean {
  if (browser && !browser.connected) return true
  const e = err as { name?: string; message?: string } | null
  return Boolean(e && (e.name === 'TargetCloseError' || CRASH_MESSAGE.test(String(e.message ?? ''))))
}

/** A small pool of reused Chromium browsers with bounded concurrency and relaunch after a crash. */
export function createBrowserPool(options: BrowserPoolOptions = {}): BrowserPool {
  const size = Math.max(1, Math.floor(options.size ?? 1))
  const pagesPerBrowser = Math.max(1, Math.floor(options.pagesPerBrowser ?? 2))
  const maxQueue = options.maxQueue ?? 100
  const retries = Math.max(0, options.retries ?? 1)
  const slots: Slot[] = Array.from({ length: size }, () => ({ launched: null, launching: null, active: 0 }))
  const waiters: Array<{ resolve: (slot: Slot) => void; reject: (err: Error) => void }> = []
  const disposing = new Set<Promise<void>>()
  const counters = { launches: 0, crashes: 0, retries: 0, completed: 0 }
  let closed = false
  let idle: (() => void) | null = null

  const activeCount = () => slots.reduce((n, s) => n + s.active, 0)

  function freeSlot(): Slot | null {
    let best: Slot | null = null
    for (const s of slots) if (s.active < pagesPerBrowser && (!best || s.active < best.active)) best = s
    return best
  }

  function acquire(): Promise<Slot> {
    if (closed) return Promise.reject(new BrowserPoolClosedError())
    const slot = freeSlot()
    if (slot) {
      slot.active += 1
      return Promise.resolve(slot)
    }
    if (waiters.length >= maxQueue) return Promise.reject(new Error(`The report renderer is busy: ${waiters.length} documents are already waiting`))
    return new Promise((resolve, reject) => waiters.push({ resolve, reject }))
  }

  function release(slot: Slot) {
    slot.active -= 1
    const next = waiters.shift()
    if (next) {
      slot.active += 1
      next.resolve(slot)
    } else if (idle && activeCount() === 0) idle()
  }

  function discard(slot: Slot, launched: LaunchedBrowser) {
    if (slot.launched !== launched) return
    slot.launched = null
    const p = launched.dispose().finally(() => disposing.delete(p))
    disposing.add(p)
  }

  async function browserOf(slot: Slot): Promise<Browser> {
    if (slot.launched?.browser.connected) return slot.launched.browser
    if (slot.launched) discard(slot, slot.launched)
    if (!slot.launching) {
      slot.launching = launchReportBrowser({ executablePath: options.executablePath, timeoutMs: options.launchTimeoutMs })
        .then((launched) => {
          counters.launches += 1
          slot.launched = launched
          launched.browser.once('disconnected', () => {
            if (slot.launched === launched && !closed) {
              counters.crashes += 1
              discard(slot, launched)
            }
          })
          return launched
        })
        .finally(() => {
          slot.launching = null
        })
    }
    return (await slot.launching).browser
  }

  async function run<T>(task: (context: BrowserContext, browser: Browser) => Promise<T>): Promise<T> {
    const slot = await acquire()
    try {
      for (let attempt = 0; ; attempt++) {
        let browser: Browser | null = null
        let context: BrowserContext | null = null
        try {
          browser = await browserOf(slot)
          context = await browser.createBrowserContext()
          const result = await task(context, browser)
          counters.completed += 1
          return result
        } catch (err) {
          if (closed || attempt >= retries || !isBrowserCrash(err, browser)) throw err
          counters.retries += 1
          const current = slot.launched
          if (current && current.browser === browser) {
            if (current.browser.connected) counters.crashes += 1
            discard(slot, current)
          }
        } finally {
          if (context && browser?.connected) await context.close().catch(() => undefined)
        }
      }
    } finally {
      release(slot)
    }
  }

  return {
    run,
    stats: () => ({ size, pagesPerBrowser, ...counters, active: activeCount(), queued: waiters.length }),
    processIds: () => slots.map((s) => s.launched?.browser.process()?.pid).filter((pid): pid is number => typeof pid === 'number'),
    async close(timeoutMs = 15_000) {
      if (closed) return
      closed = true
      for (const w of waiters.splice(0)) w.reject(new BrowserPoolClosedError())
      if (activeCount() > 0) {
        await new Promise<void>((resolve) => {
          const timer = setTimeout(resolve, timeoutMs)
          idle = () => {
            clearTimeout(timer)
            resolve()
          }
        })
      }
      await Promise.all(slots.map((s) => s.launching?.catch(() => null)))
      for (const s of slots) if (s.launched) discard(s, s.launched)
      await Promise.all([...disposing])
    },
  }
}
