import { spawn } from 'node:child_process'
import fs from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import type { TestProject } from 'vitest/node'

declare module 'vitest' {
  export interface ProvidedContext {
    /** Where the client is built for the browser tests; wait for it with `clientBuilt()` (tests/helpers/product.ts). */
    clientDist: string
  }
}

/** Written next to the build when it has finished: `ok`, or why it failed. */
export const BUILD_RESULT = 'build-result.txt'

/**
 * Builds the client once for the browser tests into a throwaway folder, and removes it after. The build runs in the
 * background while the database cluster is prepared and the first server tests run; the browser tests wait for it.
 */
export default function setup(project: TestProject) {
  const root = fs.mkdtempSync(path.join(os.tmpdir(), 'startproof-e2e-client-'))
  const distDir = path.join(root, 'dist')
  const build = spawn('node_modules/.bin/vite', ['build', '--outDir', distDir, '--emptyOutDir', '--logLevel', 'error'], { stdio: ['ignore', 'pipe', 'pipe'] })
  let output = ''
  build.stdout.on('data', (d) => (output += d))
  build.stderr.on('data', (d) => (output += d))
  const finished = new Promise<void>((resolve) => {
    build.once('error', (err) => {
      fs.writeFileSync(path.join(root, BUILD_RESULT), `vite build could not start: ${err.message}`)
      resolve()
    })
    build.once('exit', (code) => {
      fs.writeFileSync(path.join(root, BUILD_RESULT), code === 0 ? 'ok' : `vite build failed (exit ${code}): ${output}`)
      resolve()
    })
  })
  project.provide('clientDist', distDir)
  return async () => {
    if (build.exitCode === null && build.signalCode === null) build.kill('SIGTERM')
    await finished
    fs.rmSync(root, { recursive: true, force: true })
  }
}
