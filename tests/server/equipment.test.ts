import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest'
import { createHash } from 'node:crypto'
import { designPoint } from '../shared/fixtures'
import { createTestContext, makeOrganization, makeProject, makeUser, resetDatabase, signedInAgent, type TestContext } from '../helpers/context'

let ctx: TestContext
beforeAll(async () => {
  ctx = await createTestContext({ UPLOAD_MAX_MB: '1' })
})
afterAll(() => ctx.close())
beforeEach(() => resetDatabase(ctx.db))

// An invented 500-ton machine at AHRI 550/590 standard rating conditions (REFERENCES.md §1).
const chiller = {
  tag: 'ch-1',
  kind: 'centrifugal_chiller',
  location: 'Central plant, level B1',
  manufacturer: 'Greyling Refrigeration Works',
  model: 'GRW-500C',
  serialNumber: 'NRW-24-00917',
  yearBuilt: 2025,
  designPoint: structuredClone(designPoint),
}

// 1×1 pixel PNG (a valid image file) and bytes that only claim to be one.
const PNG = Buffer.from('iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mP8z8DwHwAFBQIAX8jx0gAAAABJRU5ErkJggg==', 'base64')

async function scenario() {
  const org = await makeOrganization(ctx.db)
  const admin = await makeUser(ctx.db, org, 'admin')
  const tech = await makeUser(ctx.db, org, 'technician')
  const rep = await makeUser(ctx.db, org, 'owner_rep')
  const contractor = await makeUser(ctx.db, org, 'contractor')
  const outsider = await makeUser(ctx.db, org, 'technician')
  const project = await makeProject(ctx.db, org, [tech.id, rep.id, contractor.id])
  const adminAgent = await signedInAgent(ctx.app, admin)
  return { org, admin, tech, rep, contractor, outsider, project, adminAgent }
}

describe('equipment', () => {
  it('when an admin adds a chiller, then the design point is stored in SI and read back', async () => {
    const s = await scenario()
    const res = await s.adminAgent.post(`/api/projects/${s.project.id}/equipment`).send(chiller)

    expect(res.status).toBe(201)
    expect(res.body.equipment).toMatchObject({ tag: 'CH-1', kind: 'centrifugal_chiller', refrigerant: 'R-134a', hasNameplatePhoto: false })
    const dp = res.body.equipment.designPoint
    // 500 tons × 3.516 853 kW/ton (NIST SP 811 App. B.8) = 1758.43 kW, stored in watts.
    expect(dp.capacity.unit).toBe('W')
    expect(dp.capacity.value).toBeCloseTo(1_758_426, -1)
    // 44 °F = 6.667 °C = 279.817 K (NIST SP 811 App. B.9).
    expect(dp.evaporatorLeavingWaterTemp.value).toBeCloseTo(279.8167, 3)
    // 1200 gpm × 0.063 090 20 L/s per gpm = 75.708 L/s (NIST SP 811 App. B.8).
    expect(dp.evaporatorWaterFlow.value).toBeCloseTo(0.0757082, 6)
    const again = await s.adminAgent.get(`/api/equipment/${res.body.equipment.id}`)
    expect(again.body.equipment.designPoint).toEqual(dp)
  })

  it('when the design point is wrong, then 400 names each path', async () => {
    const s = await scenario()
    const bad = structuredClone(chiller)
    bad.designPoint.evaporatorLeavingWaterTemp = { value: 60, unit: 'degF' }
    bad.designPoint.evaporatorWaterFlow = { value: -5, unit: 'gpm' }
    ;(bad.designPoint as Record<string, unknown>).voltage = { value: 460, unit: 'psig' }

    const res = await s.adminAgent.post(`/api/projects/${s.project.id}/equipment`).send(bad)

    expect(res.status).toBe(400)
    expect(Object.keys(res.body.error.fields)).toEqual(
      expect.arrayContaining(['designPoint.evaporatorWaterFlow.value', 'designPoint.voltage.unit']),
    )
    const noDp = await s.adminAgent.post(`/api/projects/${s.project.id}/equipment`).send({ ...chiller, designPoint: undefined, kind: 'boiler' })
    expect(noDp.body.error.fields).toMatchObject({ kind: 'Kind must be one of centrifugal_chiller, pump', designPoint: 'Design point is required' })
  })

  it('when a pump is added, then it takes the pump design point and no refrigerant', async () => {
    const s = await scenario()
    const res = await s.adminAgent.post(`/api/projects/${s.project.id}/equipment`).send({
      tag: 'CHWP-1',
      kind: 'pump',
      manufacturer: 'Fenwater Pumps',
      model: 'FW-8x6-13',
      serialNumber: 'FW-25-1102',
      designPoint: {
        pumpDesignFlow: { value: 1200, unit: 'gpm' },
        pumpDesignHead: { value: 85, unit: 'ftH2O' },
        motorRatedPower: { value: 40, unit: 'hp' },
        motorRatedSpeed: { value: 1780, unit: 'rpm' },
        voltage: { value: 460, unit: 'V' },
        frequency: { value: 60, unit: 'Hz' },
        fullLoadAmps: { value: 48, unit: 'A' },
      },
    })
    expect(res.status).toBe(201)
    expect(res.body.equipment.refrigerant).toBeNull()
    // 85 ft of water × 2.989 067 kPa/ft (NIST SP 811 App. B.8, conventional) = 254.07 kPa.
    expect(res.body.equipment.designPoint.pumpDesignHead.value).toBeCloseTo(254_071, -1)
  })

  it('when members list or read equipment, then they may; non-members get 404; only admins change it', async () => {
    const s = await scenario()
    const created = await s.adminAgent.post(`/api/projects/${s.project.id}/equipment`).send(chiller)
    const id = created.body.equipment.id
    for (const who of [s.tech, s.rep, s.contractor]) {
      const agent = await signedInAgent(ctx.app, who)
      expect((await agent.get(`/api/projects/${s.project.id}/equipment`)).body.equipment).toHaveLength(1)
      expect((await agent.get(`/api/equipment/${id}`)).status).toBe(200)
      expect((await agent.patch(`/api/equipment/${id}`).send({ location: 'x', version: 1 })).status).toBe(403)
      expect((await agent.post(`/api/projects/${s.project.id}/equipment`).send(chiller)).status).toBe(403)
      expect((await agent.delete(`/api/equipment/${id}`)).status).toBe(403)
    }
    const outsider = await signedInAgent(ctx.app, s.outsider)
    expect((await outsider.get(`/api/equipment/${id}`)).status).toBe(404)
    expect((await outsider.get(`/api/projects/${s.project.id}/equipment`)).status).toBe(404)
    expect((await outsider.get(`/api/equipment/${id}/nameplate-photo`)).status).toBe(404)
  })

  it('when an admin edits the nameplate and design point, then both change and the audit trail keeps before and after', async () => {
    const s = await scenario()
    const created = await s.adminAgent.post(`/api/projects/${s.project.id}/equipment`).send(chiller)
    const id = created.body.equipment.id
    const dp = { ...chiller.designPoint, refrigerant: 'R-513A', capacity: { value: 550, unit: 'TR' } }

    const res = await s.adminAgent.patch(`/api/equipment/${id}`).send({ serialNumber: 'NRW-24-00918', designPoint: dp, version: 1 })
    const kindChange = await s.adminAgent.patch(`/api/equipment/${id}`).send({ kind: 'pump', version: 2 })

    expect(res.status).toBe(200)
    expect(res.body.equipment).toMatchObject({ serialNumber: 'NRW-24-00918', refrigerant: 'R-513A', version: 2 })
    expect(res.body.runs).toEqual({ rejudged: [], voided: [] })
    expect(kindChange.status).toBe(400)
    const [event] = await ctx.db.query(`SELECT before, after FROM audit_event WHERE action = 'equipment.update'`)
    expect([event.before.serialNumber, event.after.serialNumber]).toEqual(['NRW-24-00917', 'NRW-24-00918'])
  })

  it('when the tag is already used on the project, then 409 names it', async () => {
    const s = await scenario()
    await s.adminAgent.post(`/api/projects/${s.project.id}/equipment`).send(chiller).expect(201)
    const res = await s.adminAgent.post(`/api/projects/${s.project.id}/equipment`).send(chiller)
    expect(res.status).toBe(409)
    expect(res.body.error.fields).toEqual({ tag: 'This tag is already used on this project' })
  })

  it('when a project still has equipment, then deleting the project is refused and nothing is lost', async () => {
    const s = await scenario()
    await s.adminAgent.post(`/api/projects/${s.project.id}/equipment`).send(chiller).expect(201)
    const res = await s.adminAgent.delete(`/api/projects/${s.project.id}`)
    expect(res.status).toBe(409)
    expect(res.body.error.message).toMatch(/has 1 equipment item; remove them first/)
    expect((await s.adminAgent.get(`/api/projects/${s.project.id}/equipment`)).body.equipment).toHaveLength(1)
  })

  it('when an equipment item is removed, then it is gone', async () => {
    const s = await scenario()
    const created = await s.adminAgent.post(`/api/projects/${s.project.id}/equipment`).send(chiller)
    await s.adminAgent.delete(`/api/equipment/${created.body.equipment.id}`).expect(204)
    expect((await s.adminAgent.get(`/api/equipment/${created.body.equipment.id}`)).status).toBe(404)
  })
})

describe('nameplate photo', () => {
  it('when an admin uploads a PNG, then it is stored with its SHA-256 and served back unchanged', async () => {
    const s = await scenario()
    const created = await s.adminAgent.post(`/api/projects/${s.project.id}/equipment`).send(chiller)
    const id = created.body.equipment.id

    const res = await s.adminAgent.put(`/api/equipment/${id}/nameplate-photo`).attach('photo', PNG, { filename: 'plate.png', contentType: 'image/png' })

    expect(res.status).toBe(200)
    const sha = createHash('sha256').update(PNG).digest('hex')
    expect(res.body.equipment.nameplatePhoto).toMatchObject({ sha256: sha, mimeType: 'image/png', sizeBytes: PNG.length, originalName: 'plate.png' })
    const tech = await signedInAgent(ctx.app, s.tech)
    const img = await tech.get(`/api/equipment/${id}/nameplate-photo`).buffer(true)
    expect(img.status).toBe(200)
    expect(img.headers['content-type']).toBe('image/png')
    expect(createHash('sha256').update(img.body).digest('hex')).toBe(sha)
  })

  it('when the file is not an image, claims to be one, is too large or missing, then a 4xx names the photo field', async () => {
    const s = await scenario()
    const created = await s.adminAgent.post(`/api/projects/${s.project.id}/equipment`).send(chiller)
    const url = `/api/equipment/${created.body.equipment.id}/nameplate-photo`

    const pdf = await s.adminAgent.put(url).attach('photo', Buffer.from('%PDF-1.7\n'), { filename: 'a.pdf', contentType: 'application/pdf' })
    const fake = await s.adminAgent.put(url).attach('photo', Buffer.from('just text, not a picture'), { filename: 'a.png', contentType: 'image/png' })
    const huge = await s.adminAgent.put(url).attach('photo', Buffer.concat([PNG, Buffer.alloc(1.2 * 1024 * 1024)]), { filename: 'big.png', contentType: 'image/png' })
    const none = await s.adminAgent.put(url).field('note', 'no file')

    expect([pdf.status, fake.status, huge.status, none.status]).toEqual([415, 415, 413, 400])
    for (const res of [pdf, fake, huge, none]) expect(Object.keys(res.body.error.fields)).toEqual(['photo'])
    expect(huge.body.error.message).toBe('The photo is larger than 1 MB')
    expect((await s.adminAgent.get(`/api/equipment/${created.body.equipment.id}`)).body.equipment.nameplatePhoto).toBeNull()
  })

  it('when a technician tries to upload, then 403', async () => {
    const s = await scenario()
    const created = await s.adminAgent.post(`/api/projects/${s.project.id}/equipment`).send(chiller)
    const tech = await signedInAgent(ctx.app, s.tech)
    const res = await tech.put(`/api/equipment/${created.body.equipment.id}/nameplate-photo`).attach('photo', PNG, { filename: 'p.png', contentType: 'image/png' })
    expect(res.status).toBe(403)
  })
})
