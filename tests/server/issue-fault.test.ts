import { execFileSync, spawn, type ChildProcess } from 'node:child_process'
import fs from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { freePort } from '../../server/db/cluster'
import { ownerDatabaseUrl, testDatabaseUrl } from '../helpers/cluster'
import { createTestContext, resetDatabase, TEST_PASSWORD, type TestContext } from '../helpers/context'
import { readyRun, sign, SIGNATURE } from '../helpers/runs'

// The real server as its own process, so it can be killed like a crashed machine (SIGKILL: no shutdown of any kind).
let ctx: TestContext
let root: string
const children: ChildProcess[] = []

beforeAll(async () => {
  ctx = await createTestContext()
  await resetDatabase(ctx.db)
  root = fs.mkdtempSync(path.join(os.tmpdir(), 'startproof-fault-'))
})
afterAll(async () => {
  for (const c of children) if (c.exitCode === null) c.kill('SIGKILL')
  await ctx.close()
  fs.rmSync(root, { recursive: true, force: true })
})

async function startServerProcess(env: Record<string, string>): Promise<{ child: ChildProcess; base: string; log: () => string }> {
  const port = await freePort()
  let log = ''
  const child = spawn(process.execPath, ['--import', 'tsx', 'server/index.ts'], {
    cwd: path.resolve(import.meta.dirname, '../..'),
    env: {
      ...process.env,
      NODE_ENV: 'test',
      DATABASE_URL: testDatabaseUrl(),
      MIGRATION_DATABASE_URL: ownerDatabaseUrl(),
      HOST: '127.0.0.1',
      PORT: String(port),
      STORAGE_DIR: ctx.config.STORAGE_DIR,
      CERT_DIR: path.join(root, 'certs'),
      CLIENT_DIST: '/nonexistent-startproof-client',
      ...env,
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  })
  children.push(child)
  child.stdout!.on('data', (d) => (log += d))
  child.stderr!.on('data', (d) => (log += d))
  const deadline = Date.now() + 60_000
  while (!log.includes('Startproof is serving')) {
    if (child.exitCode !== null) throw new Error(`server exited with ${child.exitCode}:\n${log}`)
    if (Date.now() > deadline) throw new Error(`server did not start:\n${log}`)
    await new Promise((r) => setTimeout(r, 200))
  }
  return { child, base: `http://127.0.0.1:${port}`, log: () => log }
}

async function signInAt(base: string, email: string): Promise<string> {
  const res = await fetch(`${base}/api/session`, { method: 'POST', headers: { 'content-type': 'application/json', origin: base }, body: JSON.stringify({ email, password: TEST_PASSWORD }) })
  expect(res.status).toBe(200)
  return res.headers.getSetCookie().map((c) => c.split(';')[0]).join('; ')
}

describe('a server killed right after acceptance', () => {
  it('when the process dies before the report is rendered, then after a restart the report is rendered and sealed with the signed snapshot hash', async () => {
    const s = await readyRun(ctx)
    await sign(s.techAgent, s.run.id, 'performed_by').then((r) => expect(r.status).toBe(201))
    const review = (await s.repAgent.get(`/api/runs/${s.run.id}/review`)).body.review

    // A web process that does not render: the acceptance is answered, then the machine is gone.
    const web = await startServerProcess({ REPORT_WORKER: 'false' })
    const cookie = await signInAt(web.base, s.rep.email)
    const accepted = await fetch(`${web.base}/api/runs/${s.run.id}/sign`, {
      method: 'POST',
      headers: { 'content-type': 'application/json', cookie, origin: web.base },
      body: JSON.stringify({ meaning: 'accepted_by', password: TEST_PASSWORD, signatureImage: SIGNATURE, snapshotSha256: review.snapshotSha256 }),
    })
    expect(accepted.status).toBe(201)
    web.child.kill('SIGKILL')
    await new Promise((r) => web.child.once('exit', r))

    const [pending] = await ctx.db.query(`SELECT id, status, report_number, snapshot_sha256 FROM report WHERE run_id = $1`, [s.run.id])
    expect(pending).toMatchObject({ status: 'pending', snapshot_sha256: review.snapshotSha256 })

    // A fresh start of the product: the sweep finds the pending report and the worker renders it.
    const worker = await startServerProcess({ REPORT_WORKER: 'true', REPORT_SWEEP_SECONDS: '2' })
    let status = 'pending'
    for (let i = 0; i < 120 && status === 'pending'; i++) {
      await new Promise((r) => setTimeout(r, 500))
      status = (await ctx.db.query(`SELECT status FROM report WHERE id = $1`, [pending.id]))[0].status
    }
    expect(status, worker.log()).toBe('ready')
    worker.child.kill('SIGTERM')

    const pdf = (await ctx.services.reports.pdf((await ctx.services.reports.forRun(s.run.id))!))
    const file = path.join(root, `${pending.report_number}.pdf`)
    fs.writeFileSync(file, pdf)
    const text = execFileSync('pdftotext', ['-layout', file, '-'], { encoding: 'utf8' }).replace(/\s+/g, '')
    expect(text).toContain(review.snapshotSha256)
    expect(text).toContain(pending.report_number)
    const sigs: { snapshot_sha256: string }[] = await ctx.db.query(`SELECT snapshot_sha256 FROM signature WHERE run_id = $1 AND NOT voided`, [s.run.id])
    expect(sigs.map((x) => x.snapshot_sha256)).toEqual([review.snapshotSha256, review.snapshotSha256])
    const pdfsig = execFileSync('pdfsig', [file], { encoding: 'utf8' })
    expect(pdfsig).toContain('Signature is Valid')
  }, 180_000)
})
