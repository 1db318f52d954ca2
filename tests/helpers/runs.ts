import fs from 'node:fs'
import path from 'node:path'
import { randomUUID } from 'node:crypto'
import type request from 'supertest'
import { installStarterLibrary } from '../../server/services/starter-library'
import { designPoint } from '../shared/fixtures'
import { makeOrganization, makeProject, makeUser, signedInAgent, TEST_PASSWORD, type TestContext } from './context'

// A stroke drawn on a 300×100 pad (about 3 % of its pixels carry ink), and a pad with nothing drawn on it.
export const SIGNATURE = `data:image/png;base64,${fs.readFileSync(path.join(import.meta.dirname, 'signature-drawn.png')).toString('base64')}`
export const BLANK_SIGNATURE = `data:image/png;base64,${fs.readFileSync(path.join(import.meta.dirname, 'signature-blank.png')).toString('base64')}`

export const chiller = { tag: 'CH-7', kind: 'centrifugal_chiller', manufacturer: 'Test Works', model: 'TW-500', serialNumber: 'TW-7', designPoint }

/** A run whose every step but the running oil checks is not applicable (with a reason), and those two filled. */
export async function readyRun(ctx: TestContext) {
  const org = await makeOrganization(ctx.db)
  const admin = await makeUser(ctx.db, org, 'admin')
  const tech = await makeUser(ctx.db, org, 'technician', { displayName: 'Ada Tech', email: 'ada@firm.test' })
  const rep = await makeUser(ctx.db, org, 'owner_rep', { displayName: 'Olive Owner', email: 'olive@owner.test' })
  const otherRep = await makeUser(ctx.db, org, 'owner_rep')
  const project = await makeProject(ctx.db, org, [tech.id, rep.id])
  await ctx.db.query(`UPDATE project SET distribution_list = '{records@owner.test}' WHERE id = $1`, [project.id])
  await ctx.db.transaction((tx) => installStarterLibrary(tx, org.id, admin.id))
  const adminAgent = await signedInAgent(ctx.app, admin)
  const equipment = (await adminAgent.post(`/api/projects/${project.id}/equipment`).send(chiller).expect(201)).body.equipment
  const template = (await adminAgent.get('/api/templates')).body.templates.find((t: { key: string }) => t.key === 'centrifugal-chiller-startup')
  const techAgent = await signedInAgent(ctx.app, tech)
  const run = (await techAgent.post(`/api/equipment/${equipment.id}/runs`).send({ templateId: template.id }).expect(201)).body.run
  await makeSignable(techAgent, run)
  const repAgent = await signedInAgent(ctx.app, rep)
  return { org, admin, tech, rep, otherRep, project, equipment, template, run, techAgent, repAgent, adminAgent }
}

/**
 * Answers the pre-work safety items Yes (they cannot be set aside), marks every other step but the running oil checks
 * not applicable (with a reason) and fills those two, so the run can be signed.
 */
export async function makeSignable(techAgent: request.Agent, run: { id: string; definition: { sections: { steps: { id: string; safety?: boolean; fields: { id: string }[] }[] }[] } }) {
  for (const section of run.definition.sections) {
    for (const step of section.steps) {
      if (step.id === 'oil-running') continue
      if (step.safety) {
        for (const f of step.fields) await techAgent.put(`/api/runs/${run.id}/readings/${f.id}`).send({ changeId: randomUUID(), baseVersion: 0, entry: { value: true } }).expect(200)
        continue
      }
      await techAgent.put(`/api/runs/${run.id}/steps/${step.id}`).send({ changeId: randomUUID(), baseVersion: 0, notApplicable: true, naReason: 'Covered by the factory test record' }).expect(200)
    }
  }
  await techAgent.put(`/api/runs/${run.id}/readings/oilPressureRunning`).send({ changeId: randomUUID(), baseVersion: 0, entry: { value: 36, unit: 'psid' } }).expect(200)
  await techAgent.put(`/api/runs/${run.id}/readings/oilTempRunning`).send({ changeId: randomUUID(), baseVersion: 0, entry: { value: 125, unit: 'degF' } }).expect(200)
}

type Definition = { sections: { steps: { id: string; safety?: boolean; fields: { id: string }[] }[] }[] }
const change = (body: Record<string, unknown>) => ({ changeId: randomUUID(), baseVersion: 0, ...body })
const carriedFrom = (reportNumber: string) => ({ kind: 'verified_earlier', reportNumber, reason: 'Checked then and unchanged since' })

/**
 * Fills a run as a re-test does: the pre-work safety items Yes, the named readings, whole steps or single checks carried
 * over ("verified earlier") from a report, and every other step not applicable.
 */
export async function fillRetest(agent: request.Agent, run: { id: string; definition: Definition }, plan: { read?: Record<string, unknown>; carrySteps?: Record<string, string>; carryFields?: Record<string, string> }) {
  for (const step of run.definition.sections.flatMap((x) => x.steps)) {
    if (step.safety) {
      for (const f of step.fields) await agent.put(`/api/runs/${run.id}/readings/${f.id}`).send(change({ entry: { value: true } })).expect(200)
      continue
    }
    const from = plan.carrySteps?.[step.id]
    if (from) {
      await agent.put(`/api/runs/${run.id}/steps/${step.id}`).send(change({ disposition: carriedFrom(from) })).expect(200)
      continue
    }
    const own = step.fields.filter((f) => plan.read?.[f.id] !== undefined || plan.carryFields?.[f.id])
    if (!own.length) {
      await agent.put(`/api/runs/${run.id}/steps/${step.id}`).send(change({ notApplicable: true, naReason: 'Not part of this re-test' })).expect(200)
      continue
    }
    for (const f of own) {
      const body = plan.carryFields?.[f.id] ? { disposition: carriedFrom(plan.carryFields[f.id]) } : { entry: plan.read![f.id] }
      await agent.put(`/api/runs/${run.id}/readings/${f.id}`).send(change(body)).expect(200)
    }
  }
}

export const snapshotOf = async (agent: request.Agent, runId: string) => (await agent.get(`/api/runs/${runId}/review`)).body.review.snapshotSha256 as string

/** Signs a run with the test password, the test drawing and the snapshot the review shows now. */
export const sign = async (agent: request.Agent, runId: string, meaning: string, extra: Record<string, unknown> = {}) => {
  const review = (await agent.get(`/api/runs/${runId}/review`)).body.review as { snapshotSha256: string; exceptions?: { id: string }[] } | undefined
  // An acceptance acknowledges every exception the review lists, as the dialog asks; a test may send its own list.
  const acknowledged = meaning === 'accepted_by' ? { acknowledgedExceptions: (review?.exceptions ?? []).map((e) => e.id) } : {}
  return agent.post(`/api/runs/${runId}/sign`).send({ meaning, password: TEST_PASSWORD, signatureImage: SIGNATURE, snapshotSha256: review?.snapshotSha256, ...acknowledged, ...extra })
}

/** Performer and acceptance signatures, then the report job run here and now; returns the report number. */
export async function issueReport(
  s: { techAgent: request.Agent; repAgent: request.Agent },
  runId: string,
  reports: { process(reportId: string): Promise<unknown> },
): Promise<string> {
  const performed = await sign(s.techAgent, runId, 'performed_by')
  if (performed.status !== 201) throw new Error(`performer signature refused: ${performed.status} ${JSON.stringify(performed.body)}`)
  const accepted = await sign(s.repAgent, runId, 'accepted_by')
  if (accepted.status !== 201) throw new Error(`acceptance refused: ${accepted.status} ${JSON.stringify(accepted.body)}`)
  const pending = (await s.repAgent.get(`/api/runs/${runId}/report`)).body.report
  await reports.process(pending.id)
  return pending.reportNumber as string
}
