// Route bundles: the chunks a page needs on a cold load, merged into one file per page instead of the dozens of small
// chunks automatic splitting makes of a component library (one per set of views sharing a component). On a weak link
// every file is a round trip, and a browser opens at most six connections to one server over HTTP/1.1, so thirty small
// files wait for each other five deep; one bundle per page arrives in one round trip.
//
// A bundle holds every module its roots reach through static imports, less what the entry already loads and what an
// earlier bundle holds: the sign-in bundle first (the smallest page; every signed-in page needs most of it too), then
// the runner's. Modules reached only through import() (the ramp chart and its charting library) stay in chunks of their
// own, fetched when needed. Views not named here keep automatic chunks for what the bundles do not hold.
//
// The module graph is read when the build has parsed every module, before tree-shaking. A package's barrel (a module
// that only re-exports others, like `element-plus/es/index.mjs`) would make every page reach the whole package, so an
// import of named members from a barrel counts as an import of the modules those members come from.
import type { Plugin } from 'vite'

export interface RouteBundle {
  /** The chunk's name (its file is `assets/<name>-<hash>.js`). */
  name: string
  /** Modules whose static closure the bundle holds, as paths from the project root (`client/views/SignInView.vue`). */
  roots: string[]
  /**
   * The client's paths that open this page (`/runs/:runId`): the server names the bundle's files in a `Link` header of
   * index.html for them, so the browser fetches them with the entry instead of after it (server/middleware/client-assets.ts).
   */
  paths: string[]
}

/** What the build writes to `.vite/route-bundles.json` for the server. */
export interface RouteBundlesFile {
  /** `files` starts with the bundle's own chunk, then the chunks it imports. */
  bundles: { name: string; roots: string[]; paths: string[]; files: string[] }[]
}
export const ROUTE_BUNDLES_FILE = '.vite/route-bundles.json'

/** The chunk of what index.html loads before any page: a group too, so that no bundle takes the entry's modules. */
const ENTRY_GROUP = 'app'

interface ModuleNode {
  code: string | null
  imports: readonly string[]
}

const normalise = (id: string) => id.replace(/\\/g, '/')
/** `import { a, b as c } from "x"` and `export { a } from "x"`. */
const NAMED_IMPORT = /(?:import|export)\s*\{([^}]*)\}\s*from\s*["']([^"']+)["']/g
/** Every specifier a module's code names: `from "x"`, `import "x"`. */
const SPECIFIER = /(?:\bfrom\s*|\bimport\s*)["']([^"']+)["']/g

/** Member names of `{ a, b as c, type d }`, as exported by the module imported from. */
function importedNames(list: string): string[] {
  return list
    .split(',')
    .map((s) => s.trim().replace(/^type\s+/, '').split(/\s+as\s+/)[0].trim())
    .filter(Boolean)
}

type Resolve = (spec: string, importer: string) => Promise<string | undefined>

/** Member name → the module it comes from, when `id` is a package's barrel (over 50 members re-exported); else null. */
async function barrelMembers(id: string, code: string | null, resolve: Resolve): Promise<Map<string, string> | null> {
  if (!code || !id.includes('/node_modules/')) return null
  const members = new Map<string, string>()
  for (const m of code.matchAll(NAMED_IMPORT)) {
    if (!m[2].startsWith('.')) continue
    const target = await resolve(m[2], id)
    if (target) for (const name of importedNames(m[1])) members.set(name, target)
  }
  return members.size > 50 ? members : null
}

/**
 * A plugin that records the module graph when the build has parsed every module, and the `codeSplitting` groups that
 * put each bundle's modules into one chunk. Use both: `plugins: [bundles.plugin]` and
 * `output.codeSplitting.groups: bundles.groups`.
 */
export function routeBundles(root: string, bundles: RouteBundle[]) {
  let members: Map<string, string> | null = null

  const plugin: Plugin = {
    name: 'startproof:route-bundles',
    apply: 'build',
    async buildEnd(error) {
      if (error) return
      const modules = new Map<string, ModuleNode>()
      const entries: string[] = []
      for (const id of this.getModuleIds()) {
        const info = this.getModuleInfo(id)
        if (!info) continue
        modules.set(id, { code: info.code, imports: info.importedIds })
        if (info.isEntry) entries.push(id)
      }
      const resolve: Resolve = async (spec, importer) => (await this.resolve(spec, importer))?.id
      const barrels = new Map<string, Map<string, string>>()
      for (const [id, node] of modules) {
        const found = await barrelMembers(id, node.code, resolve)
        if (found) barrels.set(id, found)
      }
      // For a module importing a barrel: the modules its named imports from the barrel come from, or the whole barrel
      // when it takes the barrel any other way (a namespace, a default or a side-effect import) or names a member the
      // barrel does not list.
      const edges = new Map<string, string[]>()
      for (const [id, node] of modules) {
        if (!node.code || !node.imports.some((i) => barrels.has(i))) continue
        const out = new Set<string>()
        for (const spec of new Set([...node.code.matchAll(SPECIFIER)].map((m) => m[1]))) {
          const target = await resolve(spec, id)
          if (!target) continue
          const barrel = barrels.get(target)
          if (!barrel) {
            out.add(target)
            continue
          }
          const statements = [...node.code.matchAll(SPECIFIER)].filter((m) => m[1] === spec).length
          const named = [...node.code.matchAll(NAMED_IMPORT)].filter((m) => m[2] === spec)
          const picked = named.flatMap((m) => importedNames(m[1]).map((name) => barrel.get(name)))
          if (named.length < statements || picked.some((p) => p === undefined)) out.add(target)
          else for (const p of picked) out.add(p!)
        }
        // Whatever the code names in a way the pattern misses is kept as the build recorded it.
        for (const i of node.imports) if (!barrels.has(i)) out.add(i)
        edges.set(id, [...out])
      }
      const importsOf = (id: string) => edges.get(id) ?? modules.get(id)?.imports ?? []

      const closure = (roots: string[]) => {
        const seen = new Set<string>()
        const stack = [...roots]
        while (stack.length) {
          const id = stack.pop()!
          if (seen.has(id)) continue
          seen.add(id)
          stack.push(...importsOf(id))
        }
        return seen
      }

      const taken = closure(entries)
      members = new Map([...taken].map((id) => [id, ENTRY_GROUP]))
      const prefix = normalise(root).replace(/\/?$/, '/')
      for (const bundle of bundles) {
        const roots = bundle.roots.map((r) => {
          const id = [...modules.keys()].find((m) => normalise(m) === prefix + r)
          if (!id) throw new Error(`route bundle "${bundle.name}": no module ${r} in the build`)
          return id
        })
        for (const id of closure(roots)) {
          if (taken.has(id)) continue
          taken.add(id)
          members.set(id, bundle.name)
        }
      }
    },
  }

  // Each bundle's file and the files it imports (the entry apart: index.html loads it anyway), for the server.
  plugin.generateBundle = function (_options, output) {
    const chunks = Object.values(output).filter((c) => c.type === 'chunk')
    const byFile = new Map(chunks.map((c) => [c.fileName, c]))
    const file: RouteBundlesFile = {
      bundles: bundles.map((bundle) => {
        const chunk = chunks.find((c) => c.name === bundle.name && !c.isEntry)
        if (!chunk) throw new Error(`route bundle "${bundle.name}": no chunk of that name in the output`)
        const files: string[] = []
        const visit = (name: string) => {
          const c = byFile.get(name)
          if (!c || c.isEntry || files.includes(name)) return
          files.push(name)
          for (const i of c.imports) visit(i)
        }
        visit(chunk.fileName)
        return { name: bundle.name, roots: bundle.roots, paths: bundle.paths, files }
      }),
    }
    this.emitFile({ type: 'asset', fileName: ROUTE_BUNDLES_FILE, source: `${JSON.stringify(file, null, 2)}\n` })
  }

  const groups = [{ name: ENTRY_GROUP }, ...bundles].map((bundle, i) => ({
    name: bundle.name,
    // Above the automatic chunks: the entry first, then the bundles in the order listed.
    priority: 100 - i,
    test: (id: string) => {
      if (!members) throw new Error('route bundles: the module graph was not recorded (is the plugin in `plugins`?)')
      return members.get(id) === bundle.name
    },
  }))

  return { plugin, groups }
}
