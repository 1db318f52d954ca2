// What a cold load of the client fetches, per route: builds the client (vite build), follows Vite's manifest from the
// entry and from the route's chunk through their static imports, and prints raw, gzip and brotli bytes of the JS and
// CSS with a budget for the JS a technician's tablet downloads on weak signal. Exits 1 when a route is over budget.
//
//   npm run bench:client -- [--no-build] [--out=dist/client]
//
// Chunks a page fetches only when a field needs them, or in the background once it is idle (the ramp chart), are listed
// apart, as "on demand": the first paint of the route does not wait for them. Signed-in pages count the app's frame
// (AppShell), which the router fetches with the view. The byte counts are of the same compression the server sends (brotli
// quality 11 and gzip level 9, precompressed at build), computed here so the numbers do not depend on the plugin.
import { spawnSync } from 'node:child_process'
import fs from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import zlib from 'node:zlib'
import { ROUTE_BUNDLES_FILE, type RouteBundlesFile } from '../build/route-bundles'

const args = new Map(process.argv.slice(2).map((a) => {
  const [k, v] = a.replace(/^--/, '').split('=')
  return [k, v ?? 'true'] as const
}))
const outDir = path.resolve(args.get('out') ?? 'dist/client')

interface ManifestChunk {
  file: string
  src?: string
  name?: string
  isEntry?: boolean
  isDynamicEntry?: boolean
  imports?: string[]
  dynamicImports?: string[]
  css?: string[]
  assets?: string[]
}
type Manifest = Record<string, ManifestChunk>

interface Route {
  name: string
  /** The route's view as the manifest names it (its source path). */
  view: string
  /** Brotli bytes of JS allowed on a cold load (kB = 1000 bytes, as Vite prints them). */
  budgetBrotliJs: number
  /** Drawn inside the signed-in frame, a chunk of its own that App.vue loads with the view. */
  shell: boolean
  /** Chunks the page fetches only when a field needs them, listed apart and not counted in the budget. */
  onDemand: string[]
}

const SHELL = 'client/components/AppShell.vue'

const ROUTES: Route[] = [
  { name: 'sign-in', view: 'client/views/SignInView.vue', budgetBrotliJs: 120_000, shell: false, onDemand: [] },
  { name: 'run step', view: 'client/views/RunView.vue', budgetBrotliJs: 250_000, shell: true, onDemand: ['client/components/BaseRampChart.vue'] },
]

interface Sizes { raw: number; gzip: number; brotli: number }
const sizeCache = new Map<string, Sizes>()
function sizesOf(file: string): Sizes {
  const cached = sizeCache.get(file)
  if (cached) return cached
  const bytes = fs.readFileSync(path.join(outDir, file))
  const sizes = {
    raw: bytes.length,
    gzip: zlib.gzipSync(bytes, { level: 9 }).length,
    brotli: zlib.brotliCompressSync(bytes, {
      params: { [zlib.constants.BROTLI_PARAM_QUALITY]: 11, [zlib.constants.BROTLI_PARAM_SIZE_HINT]: bytes.length },
    }).length,
  }
  sizeCache.set(file, sizes)
  return sizes
}
const add = (a: Sizes, b: Sizes): Sizes => ({ raw: a.raw + b.raw, gzip: a.gzip + b.gzip, brotli: a.brotli + b.brotli })
const zero = (): Sizes => ({ raw: 0, gzip: 0, brotli: 0 })
const kB = (n: number) => `${(n / 1000).toFixed(1)} kB`

/** Every manifest key a cold load of `keys` fetches: the chunks and their static imports, depth first. */
function staticClosure(manifest: Manifest, keys: string[]): string[] {
  const seen = new Set<string>()
  const visit = (key: string) => {
    if (seen.has(key)) return
    if (!manifest[key]) throw new Error(`The manifest has no chunk "${key}"`)
    seen.add(key)
    for (const imported of manifest[key].imports ?? []) visit(imported)
  }
  keys.forEach(visit)
  return [...seen]
}

/**
 * The manifest key of the chunk that holds `src`: its own chunk, or the route bundle it was merged into
 * (build/route-bundles.ts), which the manifest names by file only.
 */
function chunkKeyOf(manifest: Manifest, bundles: RouteBundlesFile | null, src: string): string {
  if (manifest[src]) return src
  const bundle = bundles?.bundles.find((b) => b.roots.includes(src))
  const key = bundle && Object.keys(manifest).find((k) => manifest[k].file === bundle.files[0])
  if (!key) throw new Error(`The manifest has no chunk for "${src}", and no route bundle holds it`)
  return key
}

function filesOf(manifest: Manifest, keys: string[]) {
  const js = new Set<string>()
  const css = new Set<string>()
  for (const key of keys) {
    const chunk = manifest[key]
    if (chunk.file.endsWith('.js')) js.add(chunk.file)
    for (const c of chunk.css ?? []) css.add(c)
    if (chunk.file.endsWith('.css')) css.add(chunk.file)
  }
  // With one stylesheet for the whole client (build.cssCodeSplit false) the manifest names it on its own, and
  // index.html links it for every page.
  if (manifest['style.css']) css.add(manifest['style.css'].file)
  return { js: [...js], css: [...css] }
}

function total(files: string[]): Sizes {
  return files.reduce((sum, f) => add(sum, sizesOf(f)), zero())
}

function main() {
  if (args.get('build') !== 'false' && !args.has('no-build')) {
    const t = performance.now()
    const build = spawnSync('node_modules/.bin/vite', ['build', '--outDir', outDir, '--emptyOutDir', '--logLevel', 'warn'], { encoding: 'utf8', stdio: 'inherit' })
    if (build.status !== 0) throw new Error('vite build failed')
    console.log(`vite build into ${path.relative(process.cwd(), outDir) || outDir}: ${((performance.now() - t) / 1000).toFixed(1)} s`)
  }
  const manifestPath = path.join(outDir, '.vite', 'manifest.json')
  if (!fs.existsSync(manifestPath)) throw new Error(`${manifestPath} is missing: build.manifest must be on in vite.config.ts`)
  const manifest = JSON.parse(fs.readFileSync(manifestPath, 'utf8')) as Manifest
  const bundlesPath = path.join(outDir, ROUTE_BUNDLES_FILE)
  const bundles = fs.existsSync(bundlesPath) ? (JSON.parse(fs.readFileSync(bundlesPath, 'utf8')) as RouteBundlesFile) : null
  const entry = Object.keys(manifest).find((k) => manifest[k].isEntry)
  if (!entry) throw new Error('The manifest has no entry chunk')

  const allJs = Object.values(manifest).filter((c) => c.file.endsWith('.js')).map((c) => c.file)
  const everything = total([...new Set(allJs)])
  console.log(`Machine: ${os.cpus().length} × ${os.cpus()[0]?.model ?? 'cpu'}, load average ${os.loadavg().map((l) => l.toFixed(2)).join(' ')}`)
  console.log(`All JS in the build: ${new Set(allJs).size} files, ${kB(everything.raw)} raw, ${kB(everything.gzip)} gzip, ${kB(everything.brotli)} brotli`)

  let over = 0
  for (const route of ROUTES) {
    // Before the frame was split from the entry, the manifest has no chunk of its own for it.
    const shell = route.shell && (manifest[SHELL] || bundles?.bundles.some((b) => b.roots.includes(SHELL))) ? [chunkKeyOf(manifest, bundles, SHELL)] : []
    const keys = staticClosure(manifest, [entry, chunkKeyOf(manifest, bundles, route.view), ...shell])
    const { js, css } = filesOf(manifest, keys)
    const jsSizes = total(js)
    const cssSizes = total(css)
    const loaded = new Set(keys)
    const lazyKeys = route.onDemand.filter((k) => manifest[k]).flatMap((k) => staticClosure(manifest, [k])).filter((k) => !loaded.has(k))
    const lazy = filesOf(manifest, [...new Set(lazyKeys)])
    const ok = jsSizes.brotli <= route.budgetBrotliJs
    if (!ok) over++

    console.log(`\n${route.name} (${route.view}): ${js.length} JS + ${css.length} CSS files on a cold load`)
    const w = Math.max(...[...js, ...css, ...lazy.js].map((f) => f.length), 10)
    console.log(`  ${'file'.padEnd(w)}  ${'raw'.padStart(9)}  ${'gzip'.padStart(9)}  ${'brotli'.padStart(9)}`)
    const row = (label: string, s: Sizes) => console.log(`  ${label.padEnd(w)}  ${kB(s.raw).padStart(9)}  ${kB(s.gzip).padStart(9)}  ${kB(s.brotli).padStart(9)}`)
    for (const f of [...js].sort((a, b) => sizesOf(b).raw - sizesOf(a).raw).slice(0, 8)) row(f, sizesOf(f))
    if (js.length > 8) console.log(`  … ${js.length - 8} smaller JS files`)
    row('JS total', jsSizes)
    row('CSS total', cssSizes)
    row('JS + CSS', add(jsSizes, cssSizes))
    if (lazy.js.length) row(`on demand: ${lazy.js.length} JS files`, add(total(lazy.js), total(lazy.css)))
    console.log(`  budget: ${kB(jsSizes.brotli)} of ${kB(route.budgetBrotliJs)} brotli JS — ${ok ? 'within' : 'OVER BUDGET'}`)
  }
  console.log(`\nload average ${os.loadavg().map((l) => l.toFixed(2)).join(' ')}`)
  if (over) {
    console.error(`${over} route(s) over budget`)
    process.exit(1)
  }
}

try {
  main()
} catch (err) {
  console.error((err as Error).message)
  process.exit(2)
}
