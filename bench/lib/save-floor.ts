// The floor for `npm run bench:save`: a bare Express 5 + pg server, started as a child process by bench/save.bench.ts.
// One route saves one reading with a single INSERT … ON CONFLICT upsert into a table of its own, so it costs what any
// save of one field over HTTP and PostgreSQL costs, and nothing of the product's own work (session, access, rules,
// audit). It takes the same JSON as the product's save and uses a pool of the same size.
//
// Environment: FLOOR_DATABASE_URL (the application role), FLOOR_POOL_SIZE, FLOOR_PORT (on 127.0.0.1).
// It reports `{ port }` to its parent over IPC and exits when the parent goes away or on SIGTERM.
import type { Server } from 'node:http'
import type { AddressInfo } from 'node:net'
import express from 'express'
import pg from 'pg'
import { FLOOR_TABLE } from './floor-table'

const UPSERT = `
  INSERT INTO ${FLOOR_TABLE} (run_id, field_id, entry, version, updated_at)
  VALUES ($1, $2, $3, 1, now())
  ON CONFLICT (run_id, field_id) DO UPDATE SET entry = EXCLUDED.entry, version = ${FLOOR_TABLE}.version + 1, updated_at = EXCLUDED.updated_at
  RETURNING version, updated_at`

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
