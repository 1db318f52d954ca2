import { randomUUID } from 'node:crypto'
import pg from 'pg'
import http from 'node:http'
import { brotliDecompressSync } from 'node:zlib'
import request from 'supertest'
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest'
import type { ChecklistDefinition } from '@shared/schemas/checklist'
import { dependentFields } from '@shared/rules'
import { demoChiller } from '../../server/db/demo/plant'
import { chillerRun, rng } from '../../server/db/demo/readings'
import { Equipment, Project, Reading, RunStep } from '../../server/entities'
import { countRows, evaluateAll } from '../../server/services/run-record'
import { installStarterLibrary } from '../../server/services/starter-library'
import { createTestContext, makeOrganization, makeProject, makeUser, resetDatabase, signedInAgent, type TestContext } from '../helpers/context'

// Every statement any pg client of this process sends while `counting` is on (TypeORM's pool and the session store's).
const sent: string[] = []
let counting = false
const originalQuery = pg.Client.prototype.query
beforeAll(() => {
  pg.Client.prototype.query = function (this: pg.Client, ...args: unknown[]) {
    if (counting) {
      const first = args[0] as string | { text?: string }
      sent.push((typeof first === 'string' ? first : (first?.text ?? '')).replace(/\s+/g, ' ').trim())
    }
    return (originalQuery as (...a: unknown[]) => unknown).apply(this, args)
  } as typeof pg.Client.prototype.query
})
afterAll(() => {
  pg.Client.prototype.query = originalQuery
})

async function statementsOf<T>(work: () => Promise<T>): Promise<{ result: T; statements: string[] }> {
  sent.length = 0
  counting = true
  try {
    const result = await work()
    return { result, statements: [...sent] }
  } finally {
    counting = false
  }
}

/** The statements from BEGIN to COMMIT (TypeORM starts a transaction with START TRANSACTION). */
function transactionOf(statements: string[]): string[] {
  const begin = statements.findIndex((s) => /^(START TRANSACTION|BEGIN)/i.test(s))
  const commit = statements.findIndex((s) => /^COMMIT/i.test(s))
  return begin >= 0 && commit > begin ? statements.slice(begin, commit + 1) : []
}

let ctx: TestContext
beforeAll(async () => {
  ctx = await createTestContext()
})
afterAll(() => ctx.close())
beforeEach(() => resetDatabase(ctx.db))

// The demo's 500-ton machine: its design point has every value the generated readings are judged against.
const machine = demoChiller('CH-3', 'Plant room', 'TW-3')

/** A technician's chiller run just started, on `c` (the file's context unless a test brings its own). */
async function startedRun(c: TestContext = ctx) {
  const org = await makeOrganization(c.db)
  const admin = await makeUser(c.db, org, 'admin')
  const tech = await makeUser(c.db, org, 'technician', { displayName: 'Ada Tech' })
  const project = await makeProject(c.db, org, [tech.id])
  await c.db.transaction((tx) => installStarterLibrary(tx, org.id, admin.id))
  const adminAgent = await signedInAgent(c.app, admin)
  const equipment = (await adminAgent.post(`/api/projects/${project.id}/equipment`).send(machine).expect(201)).body.equipment
  const template = (await adminAgent.get('/api/templates')).body.templates.find((t: { key: string }) => t.key === 'centrifugal-chiller-startup')
  const techAgent = await signedInAgent(c.app, tech)
  const run = (await techAgent.post(`/api/equipment/${equipment.id}/runs`).send({ templateId: template.id }).expect(201)).body.run
  return { tech, techAgent, run, definition: run.definition as ChecklistDefinition }
}

const save = (agent: Awaited<ReturnType<typeof startedRun>>['techAgent'], runId: string, fieldId: string, entry: unknown, baseVersion: number, changeId = randomUUID()) =>
  agent.put(`/api/runs/${runId}/readings/${fieldId}`).send({ changeId, baseVersion, entry })

describe('saving a reading', () => {
  it('when a technician saves a reading, then the whole request, session and person included, is 3 statements (at most 8 asked for), with no transaction held between them', async () => {
    const { techAgent, run } = await startedRun()
    // The first save of a version also reads its definition once for the process; count a later one.
    await save(techAgent, run.id, 'safetyBriefing', { value: true }, 0).expect(200)
    const { result, statements } = await statementsOf(() => save(techAgent, run.id, 'manufacturerInstructions', { value: true }, 0))
    expect(result.status).toBe(200)
    expect(result.body.reading.entry).toEqual({ value: true })
    // The session and the signed-in person read together (server/auth/session-user.ts), the run as it stands with its
    // readings, then the one write that lands only if the run's revision is still the one read.
    expect(statements.length, statements.join('\n')).toBe(3)
    expect(statements[0], statements.join('\n')).toMatch(/FROM session s\s+LEFT JOIN \(app_user u JOIN organization o/)
    expect(statements[1]).toMatch(/^SELECT r\.id, .* FROM run r .* WHERE r\.id = \$1$/)
    expect(statements[2]).toMatch(/^WITH guard AS \( UPDATE run SET revision = revision \+ 1/)
    expect(transactionOf(statements), statements.join('\n')).toEqual([])
    expect(statements.filter((s) => /WHERE u\.id = \$1 AND u\.active/.test(s)), statements.join('\n')).toEqual([])
    const [{ revision }] = await ctx.db.query(`SELECT revision FROM run WHERE id = $1`, [run.id])
    expect(revision).toBe(2)
  })

  it('when the run changes between a save\'s read and its write, then the save writes nothing, is done again under the run\'s lock, and lands on what is there', async () => {
    const { techAgent, run } = await startedRun()
    await save(techAgent, run.id, 'safetyBriefing', { value: true }, 0).expect(200)
    // Another change holds the run's row while the save is between its read and its write.
    const holder = ctx.db.createQueryRunner()
    await holder.startTransaction()
    await holder.query(`SELECT 1 FROM run WHERE id = $1 FOR UPDATE`, [run.id])
    const { result, statements } = await statementsOf(async () => {
      const saving = save(techAgent, run.id, 'manufacturerInstructions', { value: true }, 0).then((r) => r)
      // Wait until the save's guarded write waits for the row, then move the revision on and let it go.
      for (let i = 0; i < 200; i++) {
        const [{ n }] = await ctx.db.query(`SELECT count(*)::int AS n FROM pg_stat_activity WHERE wait_event_type = 'Lock' AND query LIKE 'WITH guard AS%'`)
        if (n > 0) break
        await new Promise((r) => setTimeout(r, 10))
      }
      await holder.query(`UPDATE run SET revision = revision + 1 WHERE id = $1`, [run.id])
      await holder.commitTransaction()
      await holder.release()
      return saving
    })
    expect(result.status, JSON.stringify(result.body)).toBe(200)
    expect(result.body.duplicate).toBe(false)
    // Read without the lock, the guarded write (writing nothing), then the same two under the run's lock in a transaction.
    const own = statements.filter((s) => !/pg_stat_activity/.test(s))
    expect(own[1], own.join('\n')).toMatch(/WHERE r\.id = \$1$/)
    expect(own[2], own.join('\n')).toMatch(/^WITH guard AS/)
    const tx = transactionOf(own.slice(own.findIndex((s) => /^START TRANSACTION/.test(s))))
    // The lock on its own first, so the read after it sees every change committed before it (run-save.ts, lockRun).
    expect(tx.length, own.join('\n')).toBe(5)
    expect(tx[1], own.join('\n')).toBe('SELECT 1 FROM run WHERE id = $1 FOR UPDATE')
    expect(tx[2], own.join('\n')).toBe(own[1])
    expect(tx[3], own.join('\n')).toMatch(/^WITH guard AS/)
    const [kept] = await ctx.db.query(`SELECT version, entry FROM reading WHERE run_id = $1 AND field_id = 'manufacturerInstructions'`, [run.id])
    expect(kept).toEqual({ version: 1, entry: { value: true } })
    const [{ n }] = await ctx.db.query(`SELECT count(*)::int AS n FROM run_change WHERE run_id = $1 AND target_id = 'manufacturerInstructions'`, [run.id])
    expect(n).toBe(1)
    const [{ revision }] = await ctx.db.query(`SELECT revision FROM run WHERE id = $1`, [run.id])
    // The first save, the other change, and this save once: the write that found the revision moved wrote nothing.
    expect(revision).toBe(3)
  })

  it('when many readings of one run are saved at once, then every stored verdict and the kept counts equal judging and counting the whole run again', async () => {
    const { techAgent, run, definition } = await startedRun()
    await save(techAgent, run.id, 'safetyBriefing', { value: true }, 0).expect(200)
    const generated = chillerRun(definition, 'IP', machine.designPoint, rng(5), {}, { technician: 'Ada Tech', attendees: 'Olive Owner' })
    const entries = generated.entries.filter((e) => e.fieldId !== 'safetyBriefing')
    const answers = await Promise.all(entries.map(({ fieldId, entry }) => save(techAgent, run.id, fieldId, entry, 0)))
    for (const [i, res] of answers.entries()) expect(res.status, `${entries[i].fieldId}: ${JSON.stringify(res.body)}`).toBe(200)

    const stored = await ctx.db.getRepository(Reading).findBy({ runId: run.id })
    const equipment = await ctx.db.getRepository(Equipment).findOneByOrFail({ id: run.equipmentId })
    const project = await ctx.db.getRepository(Project).findOneByOrFail({ id: run.projectId })
    const full = evaluateAll({ definition, equipment, project }, stored, new Set())
    for (const r of stored) expect(r.evaluation, r.fieldId).toEqual(full[r.fieldId])
    expect(stored.filter((r) => r.entry !== null).length).toBe(entries.length + 1)
    const [{ progress }] = await ctx.db.query(`SELECT progress FROM run_progress WHERE run_id = $1`, [run.id])
    expect(progress).toEqual(countRows(definition, stored, []).totals)
    const page = (await techAgent.get(`/api/runs/${run.id}`).expect(200)).body.run
    expect(page.progress).toEqual(progress)
  })

  it('when a reading that computed fields read is saved, then only the fields depending on it are in the answer, and every stored verdict equals judging the whole run again', async () => {
    const { techAgent, run, definition } = await startedRun()
    const generated = chillerRun(definition, 'IP', machine.designPoint, rng(7), {}, { technician: 'Ada Tech', attendees: 'Olive Owner' })
    const versions: Record<string, number> = {}
    let sawDependents = false
    for (const { fieldId, entry } of generated.entries) {
      const res = await save(techAgent, run.id, fieldId, entry, versions[fieldId] ?? 0)
      expect(res.status, `${fieldId}: ${JSON.stringify(res.body)}`).toBe(200)
      versions[fieldId] = res.body.reading.version
      const answered = Object.keys(res.body.readings)
      const dependents = dependentFields(definition, fieldId)
      expect(answered.every((id) => dependents.has(id)), `${fieldId} answered ${answered.join(', ')}`).toBe(true)
      expect(res.body.reading.fieldId).toBe(fieldId)
      if (answered.some((id) => id !== fieldId)) sawDependents = true
    }
    // The generated run fills the water temperatures and flows that capacity, kW/ton and the approaches are computed from.
    expect(sawDependents).toBe(true)

    const stored = await ctx.db.getRepository(Reading).findBy({ runId: run.id })
    const naSteps = new Set((await ctx.db.getRepository(RunStep).findBy({ runId: run.id, notApplicable: true })).map((s) => s.stepId))
    const equipment = await ctx.db.getRepository(Equipment).findOneByOrFail({ id: run.equipmentId })
    const project = await ctx.db.getRepository(Project).findOneByOrFail({ id: run.projectId })
    const full = evaluateAll({ definition, equipment, project }, stored, naSteps)
    for (const r of stored) expect(r.evaluation, r.fieldId).toEqual(full[r.fieldId])
    expect(stored.filter((r) => r.evaluation.computed && r.evaluation.verdict !== 'incomplete').length).toBeGreaterThan(3)

    // The run page then shows what the saves stored, with the same progress as the last save's answer.
    const page = (await techAgent.get(`/api/runs/${run.id}`).expect(200)).body.run
    for (const r of stored) expect(page.readings[r.fieldId].evaluation).toEqual(r.evaluation)
  })

  it('when the same change is sent twice (its answer was lost), then the second is answered as a duplicate without a second audit event', async () => {
    const { techAgent, run } = await startedRun()
    const changeId = randomUUID()
    const first = await save(techAgent, run.id, 'safetyBriefing', { value: true }, 0, changeId).expect(200)
    const again = await save(techAgent, run.id, 'safetyBriefing', { value: true }, 0, changeId).expect(200)
    expect(again.body.duplicate).toBe(true)
    expect(again.body.reading).toEqual(first.body.reading)
    expect(again.body.progress).toEqual(first.body.progress)
    const [{ n }] = await ctx.db.query(`SELECT count(*)::int AS n FROM audit_event WHERE action = 'reading.set' AND entity_id = $1`, [`${run.id}/safetyBriefing`])
    expect(n).toBe(1)
  })
})

describe('the run page', () => {
  it('when a technician opens a run, then it is read in a handful of statements, names joined rather than looked up per step', async () => {
    const { techAgent, run, definition } = await startedRun()
    const generated = chillerRun(definition, 'IP', machine.designPoint, rng(11), {}, { technician: 'Ada Tech', attendees: 'Olive Owner' })
    for (const { fieldId, entry } of generated.entries.slice(0, 25)) await save(techAgent, run.id, fieldId, entry, 0).expect(200)
    const { result, statements } = await statementsOf(() => techAgent.get(`/api/runs/${run.id}`))
    expect(result.status).toBe(200)
    expect(Object.keys(result.body.run.readings).length).toBeGreaterThan(40)
    expect(result.body.run.readings[generated.entries[0].fieldId].updatedByName).toBe('Ada Tech')
    // The session, the person, the run with its project, equipment and version, then readings, steps, findings, files, signatures.
    expect(statements.length, statements.join('\n')).toBeLessThanOrEqual(9)
  })
})

describe('overload', () => {
  it('when every connection is busy, then a save is answered 503 with Retry-After, nothing is stored, and the same change goes through later', async () => {
    const busy = await createTestContext({ DB_POOL_SIZE: '2', DB_POOL_WAIT_MS: '300' })
    try {
      const { techAgent, run } = await startedRun(busy)

      // Two long statements hold both connections of the pool.
      const holders = [busy.db.query('SELECT pg_sleep(2)'), busy.db.query('SELECT pg_sleep(2)')]
      await new Promise((r) => setTimeout(r, 100))
      const changeId = randomUUID()
      const refused = await save(techAgent, run.id, 'safetyBriefing', { value: true }, 0, changeId)
      expect(refused.status).toBe(503)
      expect(refused.headers['retry-after']).toMatch(/^\d+$/)
      expect(refused.body.error.code).toBe('busy')
      await Promise.all(holders)
      const [kept] = await busy.db.query(`SELECT version, entry FROM reading WHERE run_id = $1 AND field_id = 'safetyBriefing'`, [run.id])
      expect(kept).toEqual({ version: 0, entry: null })

      const later = await save(techAgent, run.id, 'safetyBriefing', { value: true }, 0, changeId)
      expect(later.status).toBe(200)
      expect(later.body.duplicate).toBe(false)
      expect(later.body.reading.entry).toEqual({ value: true })
    } finally {
      await busy.close()
    }
  })
})

describe('the run list', () => {
  it('when there are more runs than a page, then pages follow each other newest first with none missed or repeated, progress comes from the kept counts, and a bad cursor is a 400', async () => {
    const { techAgent, run, definition } = await startedRun()
    const equipmentId = run.equipmentId
    const templateId = run.templateId
    const ids = [run.id]
    for (let i = 0; i < 6; i++) ids.push((await techAgent.post(`/api/equipment/${equipmentId}/runs`).send({ templateId }).expect(201)).body.run.id)
    // Two runs changed in the same millisecond would still be told apart by their id.
    await ctx.db.query(`UPDATE run SET updated_at = '2026-11-30T08:00:00.123456Z' WHERE id = ANY($1::uuid[])`, [ids.slice(2, 5)])
    const first = await save(techAgent, run.id, 'safetyBriefing', { value: true }, 0).expect(200)

    const seen: string[] = []
    let cursor: string | null = null
    let pages = 0
    do {
      const res: { body: { runs: { id: string }[]; nextCursor: string | null } } = await techAgent.get(`/api/runs?limit=2${cursor ? `&cursor=${cursor}` : ''}`).expect(200)
      expect(res.body.runs.length).toBeLessThanOrEqual(2)
      seen.push(...res.body.runs.map((r: { id: string }) => r.id))
      cursor = res.body.nextCursor
      pages += 1
    } while (cursor)
    expect(pages).toBe(4)
    expect(seen).toHaveLength(7)
    expect(new Set(seen)).toEqual(new Set(ids))
    // The saved run changed last, so it leads, with the counts its save answered.
    expect(seen[0]).toBe(run.id)
    const listed = (await techAgent.get('/api/runs?limit=1').expect(200)).body.runs[0]
    expect(listed.progress).toEqual(first.body.progress)
    expect(listed.progress.answered).toBe(1)
    expect(definition.sections.length).toBeGreaterThan(0)

    const bad = await techAgent.get('/api/runs?cursor=bm90LWEtY3Vyc29y').expect(400)
    expect(bad.body.error.fields).toHaveProperty('cursor')
    expect((await techAgent.get('/api/runs?limit=0')).status).toBe(400)
    expect((await techAgent.get('/api/runs?limit=201')).status).toBe(400)
  })

  it('when the run audit trail is asked for, then PostgreSQL can serve it from an index rather than reading every event', async () => {
    const plans = (await ctx.db.query(
      `EXPLAIN SELECT e.id FROM audit_event e
        WHERE e.project_id = $1 AND (e.entity_id = $2 OR e.entity_id LIKE $2 || '/%' OR (e.after ->> 'runId') = $2)`,
      ['00000000-0000-0000-0000-000000000001', '00000000-0000-0000-0000-000000000002'],
    )) as { 'QUERY PLAN': string }[]
    // With the planner told not to scan sequentially, a plan that still must is a missing index.
    await ctx.db.transaction(async (tx) => {
      await tx.query('SET LOCAL enable_seqscan = off')
      const forced = (await tx.query(
        `EXPLAIN SELECT e.id FROM audit_event e
          WHERE e.project_id = $1 AND (e.entity_id = $2 OR e.entity_id LIKE $2 || '/%' OR (e.after ->> 'runId') = $2)`,
        ['00000000-0000-0000-0000-000000000001', '00000000-0000-0000-0000-000000000002'],
      )) as { 'QUERY PLAN': string }[]
      const text = forced.map((p) => p['QUERY PLAN']).join('\n')
      expect(text, text).toMatch(/Index|Bitmap/)
      expect(text, text).not.toMatch(/Seq Scan on audit_event/)
    })
    expect(plans.length).toBeGreaterThan(0)
  })
})

describe('compressed answers', () => {
  it('when a browser offers brotli, then the run page comes compressed and decodes to the same JSON; a photo download is sent as it is', async () => {
    const { tech, techAgent, run } = await startedRun()
    const plain = await techAgent.get(`/api/runs/${run.id}`).set('Accept-Encoding', 'identity').expect(200)
    expect(plain.headers['content-encoding']).toBeUndefined()
    // Node's own client, which (unlike supertest) hands over the bytes as sent.
    const signIn = await request(ctx.app).post('/api/session').send({ email: tech.email, password: tech.password }).expect(200)
    const cookie = String((signIn.headers['set-cookie'] as unknown as string[])[0]).split(';')[0]
    const server = ctx.app.listen(0, '127.0.0.1')
    await new Promise((r) => server.once('listening', r))
    const port = (server.address() as { port: number }).port
    const raw = await new Promise<{ headers: http.IncomingHttpHeaders; body: Buffer }>((resolve, reject) => {
      http
        .get({ host: '127.0.0.1', port, path: `/api/runs/${run.id}`, headers: { 'Accept-Encoding': 'gzip, deflate, br', Cookie: cookie } }, (res) => {
          const chunks: Buffer[] = []
          res.on('data', (c: Buffer) => chunks.push(c))
          res.on('end', () => resolve({ headers: res.headers, body: Buffer.concat(chunks) }))
        })
        .on('error', reject)
    }).finally(() => server.close())
    expect(raw.headers['content-encoding']).toBe('br')
    expect(raw.headers.vary).toMatch(/Accept-Encoding/i)
    const body = raw.body
    const decoded = JSON.parse(brotliDecompressSync(body).toString('utf8'))
    expect(decoded).toEqual(plain.body)
    // A run page is mostly repeated keys and words: brotli makes it several times smaller.
    expect(body.length * 4).toBeLessThan(Buffer.byteLength(JSON.stringify(plain.body)))

    const PNG = Buffer.from('iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mP8z8DwHwAFBQIAX8jx0gAAAABJRU5ErkJggg==', 'base64')
    const up = await techAgent.post(`/api/runs/${run.id}/attachments`).field('stepId', 'training-record').attach('file', PNG, { filename: 'sheet.png', contentType: 'image/png' }).expect(201)
    const file = await techAgent.get(up.body.attachment.url).set('Accept-Encoding', 'br').buffer(true).expect(200)
    expect(file.headers['content-encoding']).toBeUndefined()
    expect(Buffer.compare(file.body, PNG)).toBe(0)
  })
})
