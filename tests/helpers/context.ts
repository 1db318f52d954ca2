import fs from 'node:fs'
import os from 'node:os'
import path from 'node:path'
import pg from 'pg'
import request from 'supertest'
import type { Express } from 'express'
import type { DataSource } from 'typeorm'
import type { Role } from '@shared/types/roles'
import { loadConfig, type Config } from '../../server/config'
import { createApp } from '../../server/app'
import { createAppServices, type AppServices } from '../../server/services'
import { createDataSource, requestPoolOptions } from '../../server/db/data-source'
import { Organization, Project, ProjectMember, User } from '../../server/entities'
import { hashPassword } from '../../server/auth/passwords'
import { ownerDatabaseUrl, testDatabaseUrl } from './cluster'

export interface TestContext {
  db: DataSource
  config: Config
  app: Express
  /** The services the app was built with (the same objects its routes call). */
  services: AppServices
  close(): Promise<void>
}

/**
 * A DataSource on this worker's throwaway cluster and an app built on it, as a server process would. It connects to
 * the worker's `startproof_test` unless `env.DATABASE_URL` names another database (e.g. one from `cloneDatabase()`).
 */
export async function createTestContext(env: Record<string, string> = {}): Promise<TestContext> {
  const storageDir = fs.mkdtempSync(path.join(os.tmpdir(), 'startproof-files-'))
  // A seal certificate of the test's own, never one in the checkout's data/ that `npm start` would then sign with.
  const certDir = fs.mkdtempSync(path.join(os.tmpdir(), 'startproof-certs-'))
  const config = loadConfig({
    NODE_ENV: 'test',
    DATABASE_URL: testDatabaseUrl(),
    CLIENT_DIST: '/nonexistent-startproof-client',
    STORAGE_DIR: storageDir,
    CERT_DIR: certDir,
    ...env,
  })
  // The configured pool (DB_POOL_SIZE and its time-outs), at most 4 connections unless a test asks for its own.
  const db = createDataSource(config.DATABASE_URL, { ...requestPoolOptions(config), poolSize: env.DB_POOL_SIZE ? config.DB_POOL_SIZE : 4 })
  await db.initialize()
  const services = createAppServices(config, db)
  return {
    db,
    config,
    app: createApp({ config, db, services }),
    services,
    async close() {
      await db.destroy()
      fs.rmSync(storageDir, { recursive: true, force: true })
      fs.rmSync(certDir, { recursive: true, force: true })
    },
  }
}

/**
 * Runs `work` on a connection of the database owner, for what the application role may not do: TRUNCATE, test-only
 * triggers and functions. `database` defaults to the tests' own; a DataSource names the database it is connected to.
 */
export async function asOwner<T>(work: (client: pg.Client) => Promise<T>, database?: DataSource | string): Promise<T> {
  const url = database
    ? ownerDatabaseUrl(typeof database === 'string' ? database : new URL(String((database.options as { url?: string }).url)).pathname.slice(1))
    : ownerDatabaseUrl()
  const client = new pg.Client({ connectionString: url, application_name: 'startproof-test-owner' })
  await client.connect()
  try {
    return await work(client)
  } finally {
    await client.end()
  }
}

/**
 * Empties every table the tests write to, in `db`'s database; each test file then inserts its own rows. As the owner:
 * the application role may not truncate, and audit_event refuses DELETE by trigger.
 */
export async function resetDatabase(db: DataSource): Promise<void> {
  await asOwner(async (owner) => {
    await owner.query(
      `TRUNCATE closeout_document, report, outbound_mail, run_snapshot, signature, run_attachment, finding, run_change, run_step, reading, run, template_version, checklist_template, equipment, attachment, project_member, project, app_user, organization, session, rate_limit RESTART IDENTITY CASCADE`,
    )
    await owner.query(`TRUNCATE audit_event`)
  }, db)
}

let counter = 0
export const TEST_PASSWORD = 'correct horse battery'

// Each hash is a full scrypt (tens of milliseconds, far more on a busy machine) and tests make many users: a password
// is hashed once per test file and its hash reused. Sign-in still verifies it in full, as for any user.
const hashes = new Map<string, Promise<string>>()
const hashOf = (password: string) => {
  if (!hashes.has(password)) hashes.set(password, hashPassword(password))
  return hashes.get(password)!
}

export async function makeOrganization(db: DataSource, name = 'Test Commissioning Firm'): Promise<Organization> {
  return db.getRepository(Organization).save({ name })
}

export async function makeUser(
  db: DataSource,
  org: Organization,
  role: Role,
  overrides: Partial<Pick<User, 'email' | 'displayName' | 'active'>> & { password?: string } = {},
): Promise<User & { password: string }> {
  counter += 1
  const password = overrides.password ?? TEST_PASSWORD
  const user = await db.getRepository(User).save({
    organizationId: org.id,
    email: overrides.email ?? `${role}.${counter}@firm.test`,
    displayName: overrides.displayName ?? `Test ${role} ${counter}`,
    role,
    active: overrides.active ?? true,
    passwordHash: await hashOf(password),
  })
  return Object.assign(user, { password })
}

export async function makeProject(db: DataSource, org: Organization, memberIds: string[] = []): Promise<Project> {
  counter += 1
  const project = await db.getRepository(Project).save({
    organizationId: org.id,
    code: `TP-${counter}`,
    name: `Test plant ${counter}`,
    siteName: 'Test site',
    siteAddress: '1 Test Way',
    timeZone: 'America/Chicago',
    unitSystem: 'IP',
  })
  if (memberIds.length) await db.getRepository(ProjectMember).save(memberIds.map((userId) => ({ projectId: project.id, userId })))
  return project
}

/** A supertest agent (keeps cookies) signed in as `user`. */
export async function signedInAgent(app: Express, user: { email: string; password: string }) {
  const agent = request.agent(app)
  const res = await agent.post('/api/session').send({ email: user.email, password: user.password })
  if (res.status !== 200) throw new Error(`sign-in failed for ${user.email}: ${res.status} ${JSON.stringify(res.body)}`)
  return agent
}
