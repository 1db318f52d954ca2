import { spawnSync } from 'node:child_process'
import fs from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import type { TestProject } from 'vitest/node'

declare module 'vitest' {
  export interface ProvidedContext {
    clientDist: string
  }
}

/** Builds the client once for the browser tests into a throwaway folder, and removes it after. */
export default function setup(project: TestProject) {
  const distDir = fs.mkdtempSync(path.join(os.tmpdir(), 'startproof-e2e-client-'))
  const build = spawnSync('node_modules/.bin/vite', ['build', '--outDir', distDir, '--emptyOutDir', '--logLevel', 'error'], { encoding: 'utf8' })
  if (build.status !== 0) throw new Error(`vite build failed: ${build.stderr || build.stdout}`)
  project.provide('clientDist', distDir)
  return () => fs.rmSync(distDir, { recursive: true, force: true })
}
