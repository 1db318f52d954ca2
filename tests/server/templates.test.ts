import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest'
import request from 'supertest'
import { AuditEvent } from '../../server/entities'
import { createTestContext, makeOrganization, makeUser, resetDatabase, signedInAgent, type TestContext } from '../helpers/context'

let ctx: TestContext
beforeAll(async () => {
  ctx = await createTestContext()
})
afterAll(() => ctx.close())
beforeEach(() => resetDatabase(ctx.db))

const definition = (max = 120) => ({
  title: 'Pump check',
  sections: [
    {
      id: 'running',
      title: 'Running checks',
      steps: [
        {
          id: 'electrical',
          title: 'Electrical',
          fields: [
            { id: 'lineVoltage', label: 'Line voltage', kind: 'number', quantity: 'voltage', unit: 'V', rule: { type: 'range', min: 100, max } },
            { id: 'rotationCorrect', label: 'Rotation correct', kind: 'yes_no', rule: { type: 'yes_no', expected: true } },
          ],
        },
      ],
    },
  ],
})

async function firm() {
  const org = await makeOrganization(ctx.db)
  const admin = await makeUser(ctx.db, org, 'admin')
  const tech = await makeUser(ctx.db, org, 'technician')
  return { org, admin, tech, adminAgent: await signedInAgent(ctx.app, admin), techAgent: await signedInAgent(ctx.app, tech) }
}

async function publishedTemplate(agent: request.Agent) {
  const created = await agent.post('/api/templates').send({ key: 'pump-check', name: 'Pump check', equipmentKind: 'pump', definition: definition() })
  expect(created.status).toBe(201)
  const id = created.body.template.id as string
  await agent.post(`/api/templates/${id}/versions/1/publish`).send({ changelog: 'First issue' }).expect(200)
  return id
}

describe('/api/templates', () => {
  it('when an admin creates a template, then draft 1 exists with the definition and counts', async () => {
    const { adminAgent } = await firm()
    const res = await adminAgent.post('/api/templates').send({ key: 'pump-check', name: 'Pump check', equipmentKind: 'pump', definition: definition() })

    expect(res.status).toBe(201)
    expect(res.body.template).toMatchObject({ key: 'pump-check', draftNumber: 1, latestPublishedNumber: null, versionCount: 1 })
    expect(res.body.template.versions[0]).toMatchObject({ number: 1, status: 'draft', sectionCount: 1, stepCount: 1, fieldCount: 2 })
  })

  it('when no definition is given, then the draft starts from a minimal valid one', async () => {
    const { adminAgent } = await firm()
    const res = await adminAgent.post('/api/templates').send({ key: 'tower', name: 'Cooling tower', equipmentKind: 'cooling_tower' })
    const v1 = await adminAgent.get(`/api/templates/${res.body.template.id}/versions/1`)
    expect(v1.body.version.definition.sections[0].steps[0].fields[0].kind).toBe('yes_no')
  })

  it('when a technician, owner rep or contractor tries to create, edit or publish, then 403', async () => {
    const { org, adminAgent } = await firm()
    const id = await publishedTemplate(adminAgent)
    for (const role of ['technician', 'owner_rep', 'contractor'] as const) {
      const agent = await signedInAgent(ctx.app, await makeUser(ctx.db, org, role))
      expect((await agent.post('/api/templates').send({ key: 'x', name: 'X', equipmentKind: 'pump' })).status).toBe(403)
      expect((await agent.post(`/api/templates/${id}/versions`).send({})).status).toBe(403)
      expect((await agent.post(`/api/templates/${id}/versions/1/retire`)).status).toBe(403)
      expect((await agent.get(`/api/templates/${id}/versions/1`)).status).toBe(200)
    }
  })

  it('when nobody is signed in, then 401', async () => {
    expect((await request(ctx.app).get('/api/templates')).status).toBe(401)
  })

  it('when the definition is invalid, then creating is refused with every problem listed by path', async () => {
    const { adminAgent } = await firm()
    const bad = definition()
    bad.sections[0].steps[0].fields.push({ ...bad.sections[0].steps[0].fields[0] })
    ;(bad.sections[0].steps[0].fields[0].rule as { min: number; max: number }).max = 50

    const res = await adminAgent.post('/api/templates').send({ key: 'bad', name: 'Bad', equipmentKind: 'pump', definition: bad })

    expect(res.status).toBe(400)
    expect(res.body.error.code).toBe('invalid_definition')
    const paths = Object.keys(res.body.error.fields)
    expect(paths).toContain('sections[0].steps[0].fields[0].rule.max')
    expect(paths.some((p) => p.includes('fields[2]'))).toBe(true)
    expect(JSON.stringify(res.body.error.fields)).toMatch(/lineVoltage/)
  })

  it('when the key is taken or fields are missing, then 409 and 400 name the field', async () => {
    const { adminAgent } = await firm()
    await publishedTemplate(adminAgent)
    const dup = await adminAgent.post('/api/templates').send({ key: 'pump-check', name: 'Again', equipmentKind: 'pump' })
    const missing = await adminAgent.post('/api/templates').send({ key: 'Not A Slug' })
    expect(dup.status).toBe(409)
    expect(dup.body.error.fields).toEqual({ key: 'This key is already used by another template' })
    expect(missing.status).toBe(400)
    expect(Object.keys(missing.body.error.fields).sort()).toEqual(['equipmentKind', 'key', 'name'])
  })

  it('when a draft is valid and has a changelog, then it publishes; without a changelog it is refused', async () => {
    const { adminAgent, admin } = await firm()
    const created = await adminAgent.post('/api/templates').send({ key: 'pump-check', name: 'Pump check', equipmentKind: 'pump', definition: definition() })
    const id = created.body.template.id

    const noLog = await adminAgent.post(`/api/templates/${id}/versions/1/publish`).send({})
    const ok = await adminAgent.post(`/api/templates/${id}/versions/1/publish`).send({ changelog: 'First issue for the pump start-up' })

    expect(noLog.status).toBe(400)
    expect(noLog.body.error.fields).toEqual({ changelog: 'Changelog is required: say what changed and why' })
    expect(ok.status).toBe(200)
    expect(ok.body.version).toMatchObject({ status: 'published', changelog: 'First issue for the pump start-up', publishedByName: admin.displayName })
    const audit = await ctx.db.getRepository(AuditEvent).findOneByOrFail({ action: 'template.publish' })
    expect(audit.actorId).toBe(admin.id)
  })

  it('when a version is published, then the API refuses to change or delete it', async () => {
    const { adminAgent } = await firm()
    const id = await publishedTemplate(adminAgent)

    const put = await adminAgent.put(`/api/templates/${id}/versions/1`).send({ definition: definition(130), version: 1 })
    const del = await adminAgent.delete(`/api/templates/${id}/versions/1`)
    const again = await adminAgent.post(`/api/templates/${id}/versions/1/publish`).send({ changelog: 'again' })

    for (const res of [put, del, again]) {
      expect(res.status).toBe(409)
      expect(res.body.error.code).toBe('version_frozen')
      expect(res.body.error.message).toMatch(/open a new draft/)
    }
    const v1 = await adminAgent.get(`/api/templates/${id}/versions/1`)
    expect(v1.body.version.definition.sections[0].steps[0].fields[0].rule.max).toBe(120)
  })

  it('when someone writes to a published version straight in the database, then PostgreSQL refuses too', async () => {
    const { adminAgent } = await firm()
    const id = await publishedTemplate(adminAgent)

    await expect(
      ctx.db.query(`UPDATE template_version SET definition = '{"sections": []}' WHERE template_id = $1 AND number = 1`, [id]),
    ).rejects.toThrow(/published and cannot be changed/)
    await expect(ctx.db.query(`DELETE FROM template_version WHERE template_id = $1`, [id])).rejects.toThrow(/cannot be deleted/)
    await expect(
      ctx.db.query(`UPDATE template_version SET changelog = 'rewritten' WHERE template_id = $1 AND number = 1`, [id]),
    ).rejects.toThrow(/cannot be changed/)
    const [row] = await ctx.db.query(`SELECT definition, changelog FROM template_version WHERE template_id = $1`, [id])
    expect(row.changelog).toBe('First issue')
    expect(row.definition.sections).toHaveLength(1)
  })

  it('when a retired version is touched in the database, then that is refused as well', async () => {
    const { adminAgent } = await firm()
    const id = await publishedTemplate(adminAgent)
    await adminAgent.post(`/api/templates/${id}/versions/1/retire`).expect(200)
    await expect(ctx.db.query(`UPDATE template_version SET status = 'published' WHERE template_id = $1`, [id])).rejects.toThrow(/retired and cannot be changed/)
  })

  it('when a published template is edited, then the next draft opens as a copy, and only one draft at a time', async () => {
    const { adminAgent } = await firm()
    const id = await publishedTemplate(adminAgent)

    const draft = await adminAgent.post(`/api/templates/${id}/versions`).send({})
    const second = await adminAgent.post(`/api/templates/${id}/versions`).send({})
    const updated = await adminAgent.put(`/api/templates/${id}/versions/2`).send({ definition: definition(125), version: 1 })

    expect(draft.status).toBe(201)
    expect(draft.body.version).toMatchObject({ number: 2, status: 'draft' })
    expect(second.status).toBe(409)
    expect(second.body.error).toMatchObject({ code: 'draft_exists' })
    expect(second.body.error.message).toMatch(/Version 2 is already an open draft/)
    expect(updated.status).toBe(200)
    expect(updated.body.version).toMatchObject({ number: 2, version: 2 })
    expect(updated.body.version.definition.sections[0].steps[0].fields[0].rule.max).toBe(125)
    const detail = await adminAgent.get(`/api/templates/${id}`)
    expect(detail.body.template).toMatchObject({ latestPublishedNumber: 1, draftNumber: 2 })
    expect(detail.body.template.versions.map((v: { number: number }) => v.number)).toEqual([2, 1])
  })

  it('when a draft update is invalid, then it is refused with every error by path and the saved draft is unchanged', async () => {
    const { adminAgent } = await firm()
    const id = await publishedTemplate(adminAgent)
    await adminAgent.post(`/api/templates/${id}/versions`).send({}).expect(201)
    const bad = definition()
    bad.sections[0].steps[0].fields[0].unit = 'psig'

    const res = await adminAgent.put(`/api/templates/${id}/versions/2`).send({ definition: bad, version: 1 })

    expect(res.status).toBe(400)
    expect(res.body.error.fields['sections[0].steps[0].fields[0].unit']).toMatch(/does not measure voltage/)
    const v2 = await adminAgent.get(`/api/templates/${id}/versions/2`)
    expect(v2.body.version.definition.sections[0].steps[0].fields[0].unit).toBe('V')
  })

  it('when a draft is discarded, then it is gone and a new one can open; publish of a non-draft and retire of a draft are refused', async () => {
    const { adminAgent } = await firm()
    const id = await publishedTemplate(adminAgent)
    await adminAgent.post(`/api/templates/${id}/versions`).send({}).expect(201)

    const retireDraft = await adminAgent.post(`/api/templates/${id}/versions/2/retire`)
    await adminAgent.delete(`/api/templates/${id}/versions/2`).expect(204)
    const reopened = await adminAgent.post(`/api/templates/${id}/versions`).send({})

    expect(retireDraft.status).toBe(409)
    expect(retireDraft.body.error.code).toBe('not_published')
    expect(reopened.body.version.number).toBe(2)
  })

  it('when a non-admin reads the library, then drafts are hidden from them', async () => {
    const { adminAgent, techAgent } = await firm()
    const id = await publishedTemplate(adminAgent)
    await adminAgent.post(`/api/templates/${id}/versions`).send({}).expect(201)
    await adminAgent.post('/api/templates').send({ key: 'unpublished', name: 'Only a draft', equipmentKind: 'pump' }).expect(201)

    const list = await techAgent.get('/api/templates')
    const detail = await techAgent.get(`/api/templates/${id}`)
    const draft = await techAgent.get(`/api/templates/${id}/versions/2`)

    expect(list.body.templates.map((t: { key: string }) => t.key)).toEqual(['pump-check'])
    expect(list.body.templates[0].draftNumber).toBeNull()
    expect(detail.body.template.versions.map((v: { number: number }) => v.number)).toEqual([1])
    expect(draft.status).toBe(404)
  })

  it("when another firm's template is asked for, then 404", async () => {
    const { adminAgent } = await firm()
    const id = await publishedTemplate(adminAgent)
    const other = await makeOrganization(ctx.db, 'Other firm')
    const otherAdmin = await signedInAgent(ctx.app, await makeUser(ctx.db, other, 'admin'))
    expect((await otherAdmin.get(`/api/templates/${id}`)).status).toBe(404)
    expect((await otherAdmin.get('/api/templates')).body.templates).toEqual([])
  })

  it('when two versions are compared, then the diff lists the changed rule value', async () => {
    const { adminAgent } = await firm()
    const id = await publishedTemplate(adminAgent)
    await adminAgent.post(`/api/templates/${id}/versions`).send({}).expect(201)
    const changed = definition(125)
    changed.sections[0].steps[0].fields.push({ id: 'phaseRotation', label: 'Phase rotation checked', kind: 'yes_no', rule: { type: 'yes_no', expected: true } })
    await adminAgent.put(`/api/templates/${id}/versions/2`).send({ definition: changed, version: 1 }).expect(200)

    const res = await adminAgent.get(`/api/templates/${id}/diff?from=1&to=2`)
    const bad = await adminAgent.get(`/api/templates/${id}/diff?from=one&to=2`)

    expect(res.status).toBe(200)
    const field = res.body.diff.entries.find((e: { id: string }) => e.id === 'lineVoltage')
    expect(field).toMatchObject({ change: 'changed', level: 'field' })
    expect(field.changes).toContainEqual({ property: 'rule.max', before: 120, after: 125 })
    expect(res.body.diff.entries.find((e: { id: string }) => e.id === 'phaseRotation')).toMatchObject({ change: 'added' })
    expect(bad.status).toBe(400)
    expect(Object.keys(bad.body.error.fields)).toEqual(['query.from'])
  })

  it('when an admin renames a template, then the name changes but never the key; others get 403 and bad input 400', async () => {
    const { adminAgent, techAgent } = await firm()
    const id = await publishedTemplate(adminAgent)

    const renamed = await adminAgent.patch(`/api/templates/${id}`).send({ name: 'Pump start-up', description: 'Rotation, alignment, vibration' })
    const denied = await techAgent.patch(`/api/templates/${id}`).send({ name: 'Mine now' })
    const empty = await adminAgent.patch(`/api/templates/${id}`).send({})
    const keyChange = await adminAgent.patch(`/api/templates/${id}`).send({ key: 'other-key' })

    expect(renamed.status).toBe(200)
    expect(renamed.body.template).toMatchObject({ key: 'pump-check', name: 'Pump start-up', description: 'Rotation, alignment, vibration' })
    expect(denied.status).toBe(403)
    expect(empty.status).toBe(400)
    expect(empty.body.error.message).toBe('Give at least one of name, description')
    expect(keyChange.status).toBe(400)
  })

  it('when a definition is checked without saving, then every problem comes back by path', async () => {
    const { adminAgent } = await firm()
    const good = await adminAgent.post('/api/templates/validate').send({ definition: definition() })
    const bad = await adminAgent.post('/api/templates/validate').send({ definition: { sections: [] } })
    expect(good.body).toEqual({ valid: true, errors: [] })
    expect(bad.body.valid).toBe(false)
    expect(bad.body.errors).toEqual([
      { path: 'title', message: 'title is required' },
      { path: 'sections', message: 'sections needs at least one section' },
    ])
  })
})
