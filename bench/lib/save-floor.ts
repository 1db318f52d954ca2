// The floor for `npm run bench:save`: a bare Express 5 + pg server, started as a child process by bench/save.bench.ts.
// One route saves one reading with a single INSERT … ON CONFLICT upsert into a table of its own, so it costs what any
// save of one field over HTTP and PostgreSQL costs, and nothing of the product's own work (session, access, rules,
// audit). It takes the same JSON as the product's save and uses a pool of the same size.
//
// A second route, the obliged floor, does in the fewest statements what no save of the record may skip: it checks the
// product's signed session cookie, finds the session and its person (active) in one statement, and saves the reading
// and an audit row together in a second, atomic one. It reads the product's own `session` and `app_user` rows, so its
// writers send the product's cookies. No rules, no checklist, no verdicts, no progress: what it costs is the price of
// the obligations alone, below which no implementation of the product's save can go.
//
// Environment: FLOOR_DATABASE_URL (the application role), FLOOR_POOL_SIZE, FLOOR_PORT (on 127.0.0.1),
//              FLOOR_SESSION_SECRET (the product's SESSION_SECRET, to check its cookies).
// It reports `{ port }` to its parent over IPC and exits when the parent goes away or on SIGTERM.
import { createHmac, timingSafeEqual } from 'node:crypto'
import type { Server } from 'node:http'
import type { AddressInfo } from 'node:net'
import express from 'express'
import pg from 'pg'
import { FLOOR_AUDIT_TABLE, FLOOR_TABLE } from './floor-table'

const UPSERT = `
  INSERT INTO ${FLOOR_TABLE} (run_id, field_id, entry, version, updated_at)
  VALUES ($1, $2, $3, 1, now())
  ON CONFLICT (run_id, field_id) DO UPDATE SET entry = EXCLUDED.entry, version = ${FLOOR_TABLE}.version + 1, updated_at = EXCLUDED.updated_at
  RETURNING version, updated_at`

/** The session and its person in one statement (connect-pg-simple's table; passport keeps the user id in the session). */
const SIGNED_IN = `
  SELECT u.id FROM session s JOIN app_user u ON u.id = (s.sess -> 'passport' ->> 'user')::uuid
   WHERE s.sid = $1 AND s.expire > now() AND u.active`

/** The reading and its audit row, atomic in one autocommit statement. */
const SAVE_AND_AUDIT = `
  WITH saved AS (${UPSERT})
  , audit AS (INSERT INTO ${FLOOR_AUDIT_TABLE} (actor_id, target, after) SELECT $4, $1 || '/' || $2, $3::jsonb FROM saved)
  SELECT version, updated_at FROM saved`

/** The session id of express-session's signed cookie `s:<sid>.<HMAC-SHA256, base64 without padding>`, or null. */
function unsignedSid(cookieHeader: string | undefined, secret: string): string | null {
  const raw = /(?:^|;\s*)startproof\.sid=([^;]+)/.exec(cookieHeader ?? '')?.[1]
  if (!raw) return null
  const value = decodeURIComponent(raw)
  if (!value.startsWith('s:')) return null
  const dot = value.lastIndexOf('.')
  const sid = value.slice(2, dot)
  const expected = Buffer.from(createHmac('sha256', secret).update(sid).digest('base64').replace(/=+$/, ''))
  const given = Buffer.from(value.slice(dot + 1))
  return given.length === expected.length && timingSafeEqual(given, expected) ? sid : null
}

async function main() {
  const url = process.env.FLOOR_DATABASE_URL
  if (!url) throw new Error('FLOOR_DATABASE_URL is not set')
  const pool = new pg.Pool({ connectionString: url, max: Number(process.env.FLOOR_POOL_SIZE ?? 10), application_name: 'startproof-bench-floor' })

  const app = express()
  app.disable('x-powered-by')
  app.use(express.json({ limit: '1mb' }))
  app.put('/floor/runs/:runId/readings/:fieldId', async (req, res) => {
    const { rows } = await pool.query(UPSERT, [req.params.runId, req.params.fieldId, JSON.stringify(req.body?.entry ?? null)])
    res.json({ reading: { fieldId: req.params.fieldId, entry: req.body?.entry ?? null, version: rows[0].version, updatedAt: rows[0].updated_at } })
  })
  const secret = process.env.FLOOR_SESSION_SECRET ?? ''
  app.put('/floor-obliged/runs/:runId/readings/:fieldId', async (req, res) => {
    const sid = secret ? unsignedSid(req.headers.cookie, secret) : null
    const { rows: people } = sid ? await pool.query({ name: 'signed-in', text: SIGNED_IN, values: [sid] }) : { rows: [] }
    if (!people.length) return void res.status(401).json({ error: { code: 'not_signed_in', message: 'Sign in to continue' } })
    const entry = JSON.stringify(req.body?.entry ?? null)
    const { rows } = await pool.query({ name: 'save-and-audit', text: SAVE_AND_AUDIT, values: [req.params.runId, req.params.fieldId, entry, people[0].id] })
    res.json({ reading: { fieldId: req.params.fieldId, entry: req.body?.entry ?? null, version: rows[0].version, updatedAt: rows[0].updated_at } })
  })
  app.use((err: Error, _req: express.Request, res: express.Response, _next: express.NextFunction) => {
    res.status(500).json({ error: { code: 'floor_error', message: err.message } })
  })

  const server: Server = await new Promise((resolve, reject) => {
    const s = app.listen(Number(process.env.FLOOR_PORT ?? 0), '127.0.0.1', () => resolve(s))
    s.once('error', reject)
  })
  const stop = async () => {
    server.closeAllConnections()
    server.close()
    await pool.end().catch(() => undefined)
    process.exit(0)
  }
  process.once('SIGTERM', () => void stop())
  process.once('SIGINT', () => void stop())
  process.once('disconnect', () => void stop())
  process.send?.({ port: (server.address() as AddressInfo).port })
}

main().catch((err) => {
  console.error(err)
  process.exit(1)
})
