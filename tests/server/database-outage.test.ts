import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import request from 'supertest'
import { startCluster, stopCluster } from '../../server/db/cluster'
import { testCluster } from '../helpers/cluster'
import { createTestContext, makeOrganization, makeUser, resetDatabase, signedInAgent, type TestContext } from '../helpers/context'

let ctx: TestContext
// This worker's own cluster: stopping it leaves the other workers' tests alone.
const pg = testCluster()

beforeAll(async () => {
  ctx = await createTestContext()
  await resetDatabase(ctx.db)
})
afterAll(async () => {
  startClusterIfStopped()
  await ctx.close()
})

function startClusterIfStopped() {
  try {
    startCluster(pg.bin, { dataDir: pg.dataDir, port: pg.port, logFile: pg.logFile, throwaway: true })
  } catch {
    // already running
  }
}

describe('when PostgreSQL stops and comes back', () => {
  it('then API calls answer 503 with a clear message while it is down, and work again by themselves once it is back', async () => {
    const org = await makeOrganization(ctx.db)
    const tech = await makeUser(ctx.db, org, 'technician')
    const agent = await signedInAgent(ctx.app, tech)
    expect((await agent.get('/api/projects')).status).toBe(200)

    stopCluster(pg.bin, pg.dataDir, 'fast')
    try {
      const projects = await agent.get('/api/projects')
      const signIn = await request(ctx.app).post('/api/session').send({ email: tech.email, password: tech.password })
      const health = await request(ctx.app).get('/api/health')

      for (const res of [projects, signIn, health]) {
        expect(res.status).toBe(503)
        expect(res.headers['retry-after']).toBe('5')
        expect(res.body.error).toEqual({
          code: 'database_unavailable',
          message: 'The database cannot be reached right now, so nothing was saved. Try again in a moment.',
        })
      }
    } finally {
      startClusterIfStopped()
    }

    const again = await agent.get('/api/projects')
    expect(again.status).toBe(200)
    expect((await request(ctx.app).get('/api/health')).body).toEqual({ status: 'ok', database: 'up' })
    expect((await agent.get('/api/session')).body.user.id).toBe(tech.id)
  })
})
