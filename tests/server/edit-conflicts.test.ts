import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest'
import { ProjectMember } from '../../server/entities'
import { createTestContext, makeOrganization, makeProject, makeUser, resetDatabase, signedInAgent, type TestContext } from '../helpers/context'
import { chiller, readyRun } from '../helpers/runs'

let ctx: TestContext
beforeAll(async () => {
  ctx = await createTestContext()
})
afterAll(() => ctx.close())
beforeEach(() => resetDatabase(ctx.db))

/** "14:02 UTC" of the newest audit event with this action, as the conflict message words it. */
async function auditTime(action: string): Promise<string> {
  const [row] = await ctx.db.query(`SELECT occurred_at FROM audit_event WHERE action = $1 ORDER BY id DESC LIMIT 1`, [action])
  return `${(row.occurred_at as Date).toISOString().slice(11, 16)} UTC`
}

async function twoAdmins() {
  const org = await makeOrganization(ctx.db)
  const sam = await makeUser(ctx.db, org, 'admin', { displayName: 'Sam Example' })
  const pat = await makeUser(ctx.db, org, 'admin', { displayName: 'Pat Sample' })
  const project = await makeProject(ctx.db, org)
  return { org, sam, pat, project, samAgent: await signedInAgent(ctx.app, sam), patAgent: await signedInAgent(ctx.app, pat) }
}

describe('project edits', () => {
  it('when two admins edit the same version, then the second gets 409 edit_conflict naming who changed what, with the current project', async () => {
    const s = await twoAdmins()

    const first = await s.samAgent.patch(`/api/projects/${s.project.id}`).send({ name: 'Central plant, east', version: 1 })
    const second = await s.patAgent.patch(`/api/projects/${s.project.id}`).send({ siteName: 'East campus', version: 1 })

    expect(first.status).toBe(200)
    expect(first.body.project.version).toBe(2)
    expect(second.status).toBe(409)
    const at = await auditTime('project.update')
    expect(second.body.error).toEqual({
      code: 'edit_conflict',
      message: `Sam Example changed the name at ${at}; keep theirs or use yours`,
      fields: { name: `Changed by Sam Example at ${at}` },
    })
    expect(second.body.current).toMatchObject({ id: s.project.id, name: 'Central plant, east', siteName: 'Test site', version: 2 })
    const now = (await s.samAgent.get(`/api/projects/${s.project.id}`)).body.project
    expect(now).toMatchObject({ name: 'Central plant, east', siteName: 'Test site', version: 2 })
    expect(await ctx.db.query(`SELECT count(*)::int AS n FROM audit_event WHERE action = 'project.update'`)).toEqual([{ n: 1 }])
  })

  it('when the refused admin uses theirs on the fresh version, then both changes are kept and audited', async () => {
    const s = await twoAdmins()
    await s.samAgent.patch(`/api/projects/${s.project.id}`).send({ name: 'Central plant, east', version: 1 }).expect(200)
    const refused = await s.patAgent.patch(`/api/projects/${s.project.id}`).send({ siteName: 'East campus', version: 1 })

    const mine = await s.patAgent.patch(`/api/projects/${s.project.id}`).send({ siteName: 'East campus', version: refused.body.current.version })

    expect(mine.status).toBe(200)
    expect(mine.body.project).toMatchObject({ name: 'Central plant, east', siteName: 'East campus', version: 3 })
    const events = await ctx.db.query(`SELECT actor_id, after FROM audit_event WHERE action = 'project.update' ORDER BY id`)
    expect(events.map((e: { actor_id: string }) => e.actor_id)).toEqual([s.sam.id, s.pat.id])
  })

  it('when two admins send edits at the same moment on one version, then exactly one is applied and the other is a conflict', async () => {
    const s = await twoAdmins()

    const answers = await Promise.all([
      s.samAgent.patch(`/api/projects/${s.project.id}`).send({ name: 'Sam’s name', version: 1 }),
      s.patAgent.patch(`/api/projects/${s.project.id}`).send({ name: 'Pat’s name', version: 1 }),
    ])

    expect(answers.map((a) => a.status).sort()).toEqual([200, 409])
    const won = answers.find((a) => a.status === 200)!.body.project.name
    expect((await s.samAgent.get(`/api/projects/${s.project.id}`)).body.project).toMatchObject({ name: won, version: 2 })
  })

  it('when a stale edit changes nothing, then it is accepted as it is and the version stays', async () => {
    const s = await twoAdmins()
    await s.samAgent.patch(`/api/projects/${s.project.id}`).send({ name: 'Central plant, east', version: 1 }).expect(200)

    const same = await s.patAgent.patch(`/api/projects/${s.project.id}`).send({ name: 'Central plant, east', version: 1 })

    expect(same.status).toBe(200)
    expect(same.body.project.version).toBe(2)
    expect(await ctx.db.query(`SELECT count(*)::int AS n FROM audit_event WHERE action = 'project.update'`)).toEqual([{ n: 1 }])
  })

  it('when an admin edits on a version their own other page changed, then the conflict says it was them', async () => {
    const s = await twoAdmins()
    const otherTab = await signedInAgent(ctx.app, s.sam)
    await otherTab.patch(`/api/projects/${s.project.id}`).send({ timeZone: 'America/Denver', unitSystem: 'SI', version: 1 }).expect(200)

    const res = await s.samAgent.patch(`/api/projects/${s.project.id}`).send({ name: 'Renamed', version: 1 })

    expect(res.status).toBe(409)
    expect(res.body.error.message).toBe(`You changed the time zone and unit system at ${await auditTime('project.update')} on another page or device; keep theirs or use yours`)
  })
})

describe('equipment edits', () => {
  it('when two admins edit the same item on one version, then the second is refused with the serial change and the current item', async () => {
    const s = await twoAdmins()
    const item = (await s.samAgent.post(`/api/projects/${s.project.id}/equipment`).send(chiller).expect(201)).body.equipment
    expect(item.version).toBe(1)

    const first = await s.samAgent.patch(`/api/equipment/${item.id}`).send({ serialNumber: 'TW-7B', version: 1 })
    const second = await s.patAgent.patch(`/api/equipment/${item.id}`).send({ notes: 'Isolation valves tagged', version: 1 })

    expect(first.status).toBe(200)
    expect(second.status).toBe(409)
    const at = await auditTime('equipment.update')
    expect(second.body.error).toEqual({
      code: 'edit_conflict',
      message: `Sam Example changed the serial number at ${at}; keep theirs or use yours`,
      fields: { serialNumber: `Changed by Sam Example at ${at}` },
    })
    expect(second.body.current).toMatchObject({ id: item.id, serialNumber: 'TW-7B', notes: '', version: 2, designPoint: item.designPoint })
    expect((await s.patAgent.get(`/api/equipment/${item.id}`)).body.equipment).toMatchObject({ serialNumber: 'TW-7B', notes: '', version: 2 })
  })

  it('when the version is missing or not a number, then 400 names the version field and nothing changes', async () => {
    const s = await twoAdmins()
    const item = (await s.samAgent.post(`/api/projects/${s.project.id}/equipment`).send(chiller).expect(201)).body.equipment

    const missing = await s.samAgent.patch(`/api/equipment/${item.id}`).send({ notes: 'x' })
    const text = await s.samAgent.patch(`/api/equipment/${item.id}`).send({ notes: 'x', version: '2a' })

    expect(missing.status).toBe(400)
    expect(missing.body.error.fields).toEqual({ version: 'version is required: send the version of the record you edited' })
    expect(text.status).toBe(400)
    expect(text.body.error.fields).toEqual({ version: 'version must be a whole number' })
    expect((await s.samAgent.get(`/api/equipment/${item.id}`)).body.equipment).toMatchObject({ notes: '', version: 1 })
  })
})

describe('finding edits', () => {
  async function twoTechnicians() {
    const s = await readyRun(ctx)
    const ben = await makeUser(ctx.db, s.org, 'technician', { displayName: 'Ben Field' })
    await ctx.db.getRepository(ProjectMember).insert({ projectId: s.project.id, userId: ben.id })
    const benAgent = await signedInAgent(ctx.app, ben)
    const finding = (await s.techAgent.post(`/api/runs/${s.run.id}/findings`).send({ stepId: 'oil-running', fieldId: 'oilPressureRunning', severity: 'minor', description: 'Oil sight glass cloudy' }).expect(201)).body.finding
    return { ...s, ben, benAgent, finding }
  }

  it('when two technicians edit a finding on one version, then the second gets 409 naming the description change, with the current finding', async () => {
    const s = await twoTechnicians()
    expect(s.finding.version).toBe(1)

    const first = await s.techAgent.patch(`/api/runs/${s.run.id}/findings/${s.finding.id}`).send({ description: 'Oil sight glass cloudy; sample sent for analysis', version: 1 })
    const second = await s.benAgent.patch(`/api/runs/${s.run.id}/findings/${s.finding.id}`).send({ status: 'resolved', resolution: 'Glass cleaned', version: 1 })

    expect(first.status).toBe(200)
    expect(first.body.finding).toMatchObject({ description: 'Oil sight glass cloudy; sample sent for analysis', version: 2 })
    expect(second.status).toBe(409)
    const at = await auditTime('finding.update')
    expect(second.body.error).toEqual({
      code: 'edit_conflict',
      message: `Ada Tech changed the description at ${at}; keep theirs or use yours`,
      fields: { description: `Changed by Ada Tech at ${at}` },
    })
    expect(second.body.current).toMatchObject({ id: s.finding.id, status: 'open', description: 'Oil sight glass cloudy; sample sent for analysis', version: 2 })
  })

  it('when two technicians resolve and edit a finding at the same moment, then one answers 200 and the other 409, and nothing is lost silently', async () => {
    const s = await twoTechnicians()

    const answers = await Promise.all([
      s.techAgent.patch(`/api/runs/${s.run.id}/findings/${s.finding.id}`).send({ severity: 'major', version: 1 }),
      s.benAgent.patch(`/api/runs/${s.run.id}/findings/${s.finding.id}`).send({ status: 'resolved', resolution: 'Glass cleaned', version: 1 }),
    ])

    expect(answers.map((a) => a.status).sort()).toEqual([200, 409])
    const refused = answers.find((a) => a.status === 409)!
    const resent = await (refused === answers[0] ? s.techAgent : s.benAgent)
      .patch(`/api/runs/${s.run.id}/findings/${s.finding.id}`)
      .send({ ...(refused === answers[0] ? { severity: 'major' } : { status: 'resolved', resolution: 'Glass cleaned' }), version: refused.body.current.version })
    expect(resent.status).toBe(200)
    expect(resent.body.finding).toMatchObject({ severity: 'major', status: 'resolved', resolution: 'Glass cleaned', version: 3 })
  })

  it('when a finding edit has no version, then 400 names it', async () => {
    const s = await twoTechnicians()
    const res = await s.techAgent.patch(`/api/runs/${s.run.id}/findings/${s.finding.id}`).send({ severity: 'major' })
    expect(res.status).toBe(400)
    expect(res.body.error.fields).toEqual({ version: 'version is required: send the version of the record you edited' })
  })
})

describe('template draft saves', () => {
  const definition = (max: number) => ({
    title: 'Pump check',
    sections: [{ id: 'running', title: 'Running checks', steps: [{ id: 'electrical', title: 'Electrical', fields: [{ id: 'lineVoltage', label: 'Line voltage', kind: 'number', quantity: 'voltage', unit: 'V', rule: { type: 'range', min: 100, max } }] }] }],
  })

  it('when two admins save the same draft version, then the second gets 409 with the draft as saved, and sending it again on that version works', async () => {
    const s = await twoAdmins()
    const created = (await s.samAgent.post('/api/templates').send({ key: 'pump-check', name: 'Pump check', equipmentKind: 'pump', definition: definition(120) }).expect(201)).body.template
    const url = `/api/templates/${created.id}/versions/1`
    expect((await s.patAgent.get(url)).body.version.version).toBe(1)

    const first = await s.samAgent.put(url).send({ definition: definition(125), version: 1 })
    const second = await s.patAgent.put(url).send({ definition: definition(130), version: 1 })

    expect(first.status).toBe(200)
    expect(first.body.version.version).toBe(2)
    expect(second.status).toBe(409)
    expect(second.body.error).toEqual({ code: 'edit_conflict', message: `Sam Example changed draft version 1 at ${await auditTime('template.draft_update')}; keep theirs or use yours` })
    expect(second.body.current).toMatchObject({ number: 1, status: 'draft', version: 2 })
    expect(second.body.current.definition.sections[0].steps[0].fields[0].rule.max).toBe(125)

    const mine = await s.patAgent.put(url).send({ definition: definition(130), version: 2 })
    expect(mine.status).toBe(200)
    expect(mine.body.version).toMatchObject({ version: 3 })
    expect(mine.body.version.definition.sections[0].steps[0].fields[0].rule.max).toBe(130)
  })

  it('when a draft save has no version, then 400 names it; validating a definition needs none', async () => {
    const s = await twoAdmins()
    const created = (await s.samAgent.post('/api/templates').send({ key: 'pump-check', name: 'Pump check', equipmentKind: 'pump', definition: definition(120) }).expect(201)).body.template

    const res = await s.samAgent.put(`/api/templates/${created.id}/versions/1`).send({ definition: definition(125) })
    const check = await s.samAgent.post('/api/templates/validate').send({ definition: definition(125) })

    expect(res.status).toBe(400)
    expect(res.body.error.fields).toEqual({ version: 'version is required: send the version of the record you edited' })
    expect(check.status).toBe(200)
    expect(check.body.valid).toBe(true)
  })
})
