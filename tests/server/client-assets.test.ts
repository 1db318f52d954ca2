import fs from 'node:fs'
import http from 'node:http'
import type { AddressInfo } from 'node:net'
import path from 'node:path'
import zlib from 'node:zlib'
import { afterAll, beforeAll, describe, expect, inject, it } from 'vitest'
import { ROUTE_BUNDLES_FILE, type RouteBundlesFile } from '../../build/route-bundles'
import { chooseEncoding, SESSION_PRELOAD } from '../../server/middleware/client-assets'
import { createTestContext, type TestContext } from '../helpers/context'
import { clientBuilt } from '../helpers/product'

// The client built once for the server project (tests/setup/client.ts), served by the real app. Plain node:http and no
// supertest: superagent would undo the Content-Encoding before the test could compare the bytes on the wire.
let ctx: TestContext
let server: http.Server
let base: string
const dist = inject('clientDist')

interface Answer { status: number; headers: http.IncomingHttpHeaders; body: Buffer }
function get(urlPath: string, headers: Record<string, string> = {}): Promise<Answer> {
  return new Promise((resolve, reject) => {
    http
      .get(`${base}${urlPath}`, { headers }, (res) => {
        const chunks: Buffer[] = []
        res.on('data', (c: Buffer) => chunks.push(c))
        res.on('end', () => resolve({ status: res.statusCode ?? 0, headers: res.headers, body: Buffer.concat(chunks) }))
      })
      .on('error', reject)
  })
}

interface ManifestChunk { file: string; isEntry?: boolean; css?: string[] }
const manifest = () => JSON.parse(fs.readFileSync(path.join(dist, '.vite', 'manifest.json'), 'utf8')) as Record<string, ManifestChunk>
/** The entry chunk: the largest file every page loads, and hashed. */
const entry = () => Object.values(manifest()).find((c) => c.isEntry)!
const onDisk = (file: string) => fs.readFileSync(path.join(dist, file))

beforeAll(async () => {
  // The client is built in the background by the global setup; this file may run before it has finished.
  await clientBuilt()
  ctx = await createTestContext({ CLIENT_DIST: dist })
  server = ctx.app.listen(0, '127.0.0.1')
  await new Promise<void>((resolve) => server.once('listening', () => resolve()))
  base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`
}, 300_000)
afterAll(async () => {
  await new Promise<void>((resolve) => server.close(() => resolve()))
  await ctx.close()
})

describe('hashed assets: precompressed, cached for a year', () => {
  it('when the build is read, then every text asset of any size has its brotli and gzip copy beside it', () => {
    const js = entry().file
    expect(fs.existsSync(path.join(dist, `${js}.br`))).toBe(true)
    expect(fs.existsSync(path.join(dist, `${js}.gz`))).toBe(true)
    const large = fs.readdirSync(path.join(dist, 'assets')).filter((f) => /\.(js|css)$/.test(f) && fs.statSync(path.join(dist, 'assets', f)).size > 4096)
    expect(large.length).toBeGreaterThan(10)
    for (const f of large) expect(fs.existsSync(path.join(dist, 'assets', `${f}.br`)), `${f}.br`).toBe(true)
  })

  it('when a browser accepts brotli, then the brotli copy is sent with its JavaScript type and the one-year immutable header', async () => {
    const file = entry().file
    const res = await get(`/${file}`, { 'Accept-Encoding': 'br' })
    expect(res.status).toBe(200)
    expect(res.headers['content-encoding']).toBe('br')
    expect(res.headers['content-type']).toMatch(/^text\/javascript; charset=utf-8$/i)
    expect(res.headers['cache-control']).toBe('public, max-age=31536000, immutable')
    expect(res.headers.vary).toMatch(/Accept-Encoding/i)
    expect(res.body.length).toBeLessThan(onDisk(file).length / 2)
    expect(zlib.brotliDecompressSync(res.body).equals(onDisk(file))).toBe(true)
  })

  it('when a browser accepts gzip only, then the gzip copy is sent and unzips to the file', async () => {
    const file = entry().file
    const res = await get(`/${file}`, { 'Accept-Encoding': 'gzip, deflate' })
    expect(res.headers['content-encoding']).toBe('gzip')
    expect(res.headers['cache-control']).toBe('public, max-age=31536000, immutable')
    expect(res.headers.vary).toMatch(/Accept-Encoding/i)
    expect(zlib.gunzipSync(res.body).equals(onDisk(file))).toBe(true)
  })

  it('when Chromium lists gzip before br, then brotli is sent all the same (the smaller of two equally welcome)', async () => {
    const res = await get(`/${entry().file}`, { 'Accept-Encoding': 'gzip, deflate, br, zstd' })
    expect(res.headers['content-encoding']).toBe('br')
  })

  it('when a browser accepts no encoding, then the plain file is sent, still marked as varying by Accept-Encoding', async () => {
    const file = entry().file
    const res = await get(`/${file}`)
    expect(res.headers['content-encoding']).toBeUndefined()
    expect(res.headers.vary).toMatch(/Accept-Encoding/i)
    expect(res.body.equals(onDisk(file))).toBe(true)
  })

  it('when a stylesheet is asked for with brotli, then it is text/css and decompresses to the file', async () => {
    const sheets = [...Object.values(manifest()).flatMap((c) => c.css ?? []), ...Object.values(manifest()).map((c) => c.file).filter((f) => f.endsWith('.css'))]
    const css = sheets.find((f) => fs.existsSync(path.join(dist, `${f}.br`)))!
    expect(css).toBeTruthy()
    const res = await get(`/${css}`, { 'Accept-Encoding': 'br, gzip' })
    expect(res.headers['content-type']).toMatch(/^text\/css/)
    expect(res.headers['content-encoding']).toBe('br')
    expect(zlib.brotliDecompressSync(res.body).equals(onDisk(css))).toBe(true)
  })

  it('when the browser revalidates with the ETag it has, then the answer is 304 without a body', async () => {
    const file = entry().file
    const first = await get(`/${file}`, { 'Accept-Encoding': 'br' })
    const again = await get(`/${file}`, { 'Accept-Encoding': 'br', 'If-None-Match': String(first.headers.etag) })
    expect(again.status).toBe(304)
    expect(again.body.length).toBe(0)
  })

  it('when an asset name is not in this build, then it is 404 and not the app page', async () => {
    const res = await get('/assets/RunView-gone1234.js', { 'Accept-Encoding': 'br' })
    expect(res.status).toBe(404)
    expect(res.headers['content-type']).not.toMatch(/html/)
    expect(res.headers['content-encoding']).toBeUndefined()
    expect(res.headers['cache-control']).toBe('no-cache')
  })
})

describe('index.html and the other files', () => {
  it.each(['/', '/runs/0b6f3c7e-0000-4000-8000-000000000000?step=prestart', '/index.html'])(
    'when %s is opened, then index.html comes compressed with no-cache, its loading screen and no inline script',
    async (urlPath) => {
      const res = await get(urlPath, { 'Accept-Encoding': 'br' })
      expect(res.status).toBe(200)
      expect(res.headers['content-type']).toMatch(/^text\/html/)
      expect(res.headers['cache-control']).toBe('no-cache')
      expect(res.headers['content-encoding']).toBe('br')
      const html = zlib.brotliDecompressSync(res.body).toString('utf8')
      expect(html).toBe(onDisk('index.html').toString('utf8'))
      expect(html).toMatch(/<div id="app">\s*<div class="sp-boot" role="status"/)
      expect(html).toContain('Opening the checklist…')
      // The CSP allows inline styles ('unsafe-inline') but no inline script: every script is a file.
      for (const tag of html.match(/<script\b[^>]*>/g) ?? []) expect(tag).toMatch(/\bsrc="/)
      expect(res.headers['content-security-policy']).toMatch(/style-src 'self' 'unsafe-inline'/)
      expect(res.headers['content-security-policy']).toMatch(/script-src 'self'(;|$)/)
    },
  )

  it('when the favicon is asked for, then it is cached for a day, not a year (its name carries no hash)', async () => {
    const res = await get('/favicon.svg', { 'Accept-Encoding': 'gzip' })
    expect(res.status).toBe(200)
    expect(res.headers['content-type']).toMatch(/^image\/svg\+xml/)
    expect(res.headers['cache-control']).toBe('public, max-age=86400')
  })

  it('when the API is asked for a path it lacks, then it still answers JSON, not the app page', async () => {
    const res = await get('/api/no-such-thing', { 'Accept-Encoding': 'br' })
    expect(res.status).toBe(404)
    expect(res.headers['content-type']).toMatch(/application\/json/)
  })
})

describe('a page arrives in one round trip: its route bundle and the session named in the Link header of index.html', () => {
  const bundles = () => (JSON.parse(fs.readFileSync(path.join(dist, ROUTE_BUNDLES_FILE), 'utf8')) as RouteBundlesFile).bundles
  const bundle = (name: string) => bundles().find((b) => b.name === name)!
  /** `</a>; rel=x, </b>; rel=y` → [['/a', 'rel=x'], …] */
  const links = (header: string | string[] | undefined) =>
    String(header ?? '')
      .split(/,\s*(?=<)/)
      .filter(Boolean)
      .map((part) => {
        const [target, ...params] = part.split(';').map((x) => x.trim())
        return [target.replace(/^<|>$/g, ''), params.join('; ')] as const
      })

  it('when the build is read, then the sign-in page and the runner are a bundle each, and the entry imports neither', () => {
    const m = manifest()
    // The views were merged into their bundles: the manifest has no chunk of their own for them.
    expect(m['client/views/SignInView.vue']).toBeUndefined()
    expect(m['client/views/RunView.vue']).toBeUndefined()
    expect(bundle('sign-in').roots).toEqual(['client/views/SignInView.vue'])
    expect(bundle('runner').roots).toContain('client/views/RunView.vue')
    // The runner's bundle needs the sign-in bundle (forms and controls both pages use), never the other way round.
    expect(bundle('sign-in').files).toHaveLength(1)
    expect(bundle('runner').files).toEqual([expect.stringMatching(/^assets\/runner-/), bundle('sign-in').files[0]])
    const entryImports = (entry() as ManifestChunk & { imports?: string[] }).imports ?? []
    for (const key of entryImports) expect(bundles().flatMap((b) => b.files)).not.toContain(m[key].file)
    // The route bundles' file itself is not served: Vite's folder is a dot-folder, and express.static ignores those.
    expect(ROUTE_BUNDLES_FILE.startsWith('.vite/')).toBe(true)
  })

  it.each([
    ['/sign-in', 'sign-in'],
    ['/sign-in?redirect=%2Fprojects', 'sign-in'],
    ['/runs/0b6f3c7e-0000-4000-8000-000000000000', 'runner'],
    ['/runs/0b6f3c7e-0000-4000-8000-000000000000/', 'runner'],
  ])('when %s is opened, then the Link header preloads the session and every file of the %s bundle, each served', async (urlPath, name) => {
    const res = await get(urlPath, { 'Accept-Encoding': 'br' })
    expect(res.status).toBe(200)
    const hinted = links(res.headers.link)
    expect(hinted[0]).toEqual(['/api/session', 'rel=preload; as=fetch; crossorigin'])
    expect(hinted.slice(1)).toEqual(bundle(name).files.map((f) => [`/${f}`, 'rel=modulepreload']))
    for (const [target] of hinted.slice(1)) {
      const asset = await get(target, { 'Accept-Encoding': 'br' })
      expect(asset.status, target).toBe(200)
      expect(asset.headers['content-type']).toMatch(/javascript/)
    }
  })

  it.each(['/', '/projects', '/runs/0b6f3c7e-0000-4000-8000-000000000000/review', '/runs'])(
    'when %s (a page without a bundle) is opened, then only the session is preloaded',
    async (urlPath) => {
      const res = await get(urlPath, { 'Accept-Encoding': 'br' })
      expect(links(res.headers.link)).toEqual([['/api/session', 'rel=preload; as=fetch; crossorigin']])
    },
  )

  it('when the preloaded session is asked for by a tablet nobody is signed in on, then it is the JSON answer the client reads as "signed out"', async () => {
    expect(SESSION_PRELOAD).toContain('</api/session>')
    const res = await get('/api/session')
    expect(res.status).toBe(401)
    expect(res.headers['content-type']).toMatch(/application\/json/)
    expect(JSON.parse(res.body.toString('utf8'))).toMatchObject({ error: { code: 'not_signed_in' } })
  })
})

describe('chooseEncoding', () => {
  const both = new Set(['br', 'gzip'] as const)
  const names = (header: string | undefined) => chooseEncoding(header, both)?.name ?? null
  it.each([
    ['br', 'br'],
    ['gzip, deflate, br, zstd', 'br'],
    ['gzip', 'gzip'],
    ['br;q=0, gzip', 'gzip'],
    ['gzip;q=1.0, br;q=0.5', 'gzip'],
    ['*', 'br'],
    ['identity', null],
    ['', null],
    [undefined, null],
  ] as const)('when Accept-Encoding is %j, then %s is sent', (header, expected) => expect(names(header)).toBe(expected))
})
