import express, { type Express, type RequestHandler, type Response } from 'express'
import fs from 'node:fs'
import path from 'node:path'
import { ROUTE_BUNDLES_FILE, type RouteBundlesFile } from '../../build/route-bundles'

/** Vite's output under assets/ is named by its content's hash: a new build never reuses a name for other bytes. */
export const IMMUTABLE_CACHE = 'public, max-age=31536000, immutable'
/** Files copied from public/ (the favicon) keep their names across releases: a day, then asked again. */
export const PUBLIC_FILE_CACHE = 'public, max-age=86400'
/** index.html names the hashed files of the current release, so it is checked with the server on every load. */
export const INDEX_CACHE = 'no-cache'

/** The encodings the build writes beside each text file (vite-plugin-compression2 in vite.config.ts), best first. */
const ENCODINGS = [
  { name: 'br', suffix: '.br' },
  { name: 'gzip', suffix: '.gz' },
] as const
type Encoding = (typeof ENCODINGS)[number]
export type EncodingName = Encoding['name']

/**
 * Serves the built client: hashed assets for a year, precompressed (brotli, else gzip) when the browser accepts it,
 * index.html for every other path of the single-page app. Does nothing when the client has not been built.
 */
export function serveClient(app: Express, clientDist: string): void {
  const root = path.resolve(clientDist)
  if (!fs.existsSync(path.join(root, 'index.html'))) return
  const variants = compressedVariants(root)

  app.use('/assets', precompressed(path.join(root, 'assets'), variants, '/assets', () => IMMUTABLE_CACHE))
  // A hashed name that is not in this build (a tab left open across a release) is an error, not the app's page: the
  // browser must not run index.html as a script or a stylesheet.
  app.use('/assets', (_req, res) => void res.status(404).set('Cache-Control', 'no-cache').type('text/plain').send('Not found'))
  const index = precompressed(root, variants, '', () => INDEX_CACHE)
  const hints = preloadHints(root)
  app.use(precompressed(root, variants, '', (file) => (path.basename(file).startsWith('index.html') ? INDEX_CACHE : PUBLIC_FILE_CACHE)))
  // History-mode routes of the single-page client all load index.html.
  app.get(/^\/(?!api\/).*/, (req, res, next) => {
    res.setHeader('Link', [SESSION_PRELOAD, hints(req.path)].filter(Boolean).join(', '))
    req.url = '/index.html'
    index(req, res, next)
  })
}

/**
 * The `Link` header of index.html for a client path: the files of the page's route bundle (build/route-bundles.ts) as
 * module preloads, so a cold load fetches them beside the entry instead of one round trip after it. Null for a path no
 * bundle names, or when the build wrote no route bundles.
 */
export function preloadHints(root: string): (urlPath: string) => string | null {
  const file = path.join(root, ROUTE_BUNDLES_FILE)
  if (!fs.existsSync(file)) return () => null
  const { bundles } = JSON.parse(fs.readFileSync(file, 'utf8')) as RouteBundlesFile
  const routes = bundles.flatMap((b) =>
    b.paths.map((p) => ({
      // `/runs/:runId` → ^/runs/[^/]+/?$ (the router's own path syntax, parameters only).
      pattern: new RegExp(`^${p.split('/').map((seg) => (seg.startsWith(':') ? '[^/]+' : seg.replace(/[.*+?^${}()|[\]\\]/g, '\\$&'))).join('/')}/?$`),
      link: b.files.map((f) => `</${f}>; rel=modulepreload`).join(', '),
    })),
  )
  return (urlPath) => routes.find((r) => r.pattern.test(urlPath))?.link ?? null
}

/**
 * Every page of the client first asks who is signed in (client/stores/session.ts): named here, the browser asks while
 * the scripts are still arriving instead of after they run. `crossorigin` makes it the same CORS request, with the
 * cookie, as the page's own `fetch`, so the page takes this answer instead of asking again.
 */
export const SESSION_PRELOAD = '</api/session>; rel=preload; as=fetch; crossorigin'

/** Every file of the build that has precompressed copies beside it, as its URL path from the client's root. */
function compressedVariants(root: string): Map<string, Set<EncodingName>> {
  const found = new Map<string, Set<EncodingName>>()
  for (const entry of fs.readdirSync(root, { recursive: true, withFileTypes: true })) {
    if (!entry.isFile()) continue
    const encoding = ENCODINGS.find((e) => entry.name.endsWith(e.suffix))
    if (!encoding) continue
    const file = path.join(entry.parentPath, entry.name.slice(0, -encoding.suffix.length))
    if (!fs.existsSync(file)) continue
    const urlPath = `/${path.relative(root, file).split(path.sep).join('/')}`
    found.set(urlPath, (found.get(urlPath) ?? new Set<EncodingName>()).add(encoding.name))
  }
  return found
}

/** The encoding to send: the browser's Accept-Encoding weights, ties to the smaller brotli; null for the plain file. */
export function chooseEncoding(acceptEncoding: string | undefined, available: ReadonlySet<EncodingName>): Encoding | null {
  const weights = new Map<string, number>()
  for (const part of (acceptEncoding ?? '').split(',')) {
    const [name, ...params] = part.trim().toLowerCase().split(';')
    if (!name) continue
    const q = params.map((p) => p.trim()).find((p) => p.startsWith('q='))
    const weight = q === undefined ? 1 : Number(q.slice(2))
    weights.set(name, Number.isFinite(weight) ? weight : 0)
  }
  let best: Encoding | null = null
  let bestWeight = 0
  for (const encoding of ENCODINGS) {
    if (!available.has(encoding.name)) continue
    const weight = weights.get(encoding.name) ?? weights.get('*') ?? 0
    if (weight > bestWeight) {
      best = encoding
      bestWeight = weight
    }
  }
  return best
}

/**
 * express.static (ETag, ranges, 304, no path escapes) over `dir`, sending `x.js.br` or `x.js.gz` for `x.js` with its own
 * Content-Type and Content-Encoding when the browser accepts it. `mount` is where `dir` sits in the client's URL space.
 */
function precompressed(dir: string, variants: Map<string, Set<EncodingName>>, mount: string, cacheControl: (file: string) => string): RequestHandler {
  const serve = express.static(dir, {
    index: false,
    redirect: false,
    cacheControl: false,
    setHeaders: (res: Response, file: string) => res.setHeader('Cache-Control', cacheControl(file)),
  })
  return (req, res, next) => {
    if (req.method !== 'GET' && req.method !== 'HEAD') return next()
    let urlPath: string
    try {
      urlPath = decodeURIComponent(req.path)
    } catch {
      return serve(req, res, next) // express.static answers the malformed path
    }
    const available = variants.get(mount + urlPath)
    if (!available) return serve(req, res, next)
    // The same URL has several bodies: caches must key them by Accept-Encoding.
    res.vary('Accept-Encoding')
    const encoding = chooseEncoding(req.headers['accept-encoding'], available)
    if (!encoding) return serve(req, res, next)
    const originalUrl = req.url
    const query = originalUrl.indexOf('?')
    req.url = query < 0 ? originalUrl + encoding.suffix : originalUrl.slice(0, query) + encoding.suffix + originalUrl.slice(query)
    res.type(path.extname(urlPath))
    res.setHeader('Content-Encoding', encoding.name)
    serve(req, res, (err?: unknown) => {
      // The compressed copy went missing since start: whatever answers next must not claim its encoding.
      res.removeHeader('Content-Encoding')
      res.removeHeader('Content-Type')
      req.url = originalUrl
      next(err)
    })
  }
}
