import { Router } from 'express'
import {
  diffQuerySchema,
  draftCreateSchema,
  draftUpdateSchema,
  draftValidateSchema,
  publishSchema,
  templateCreateSchema,
  templateParamsSchema,
  templateUpdateSchema,
  versionParamsSchema,
} from '@shared/schemas/template'
import { currentUser, requireRole } from '../middleware/auth'
import { validate } from '../middleware/validate'
import { validateDefinition, type TemplateService } from '../services/template.service'

/** `/api/templates`: the checklist library. Reads for every signed-in role, changes for administrators. */
export function templateRoutes(templates: TemplateService): Router {
  const router = Router()
  const admin = requireRole('admin')
  const actor = (req: Parameters<typeof currentUser>[0]) => ({ ...currentUser(req), ip: req.ip })
  const versionArgs = (req: { params: Record<string, unknown> }) => [String(req.params.templateId), Number(req.params.number)] as const

  router.get('/', async (req, res) => {
    res.json({ templates: await templates.list(currentUser(req)) })
  })

  router.post('/', admin, validate({ body: templateCreateSchema }), async (req, res) => {
    res.status(201).json({ template: await templates.create(req.body, actor(req)) })
  })

  router.post('/validate', admin, validate({ body: draftValidateSchema }), async (req, res) => {
    res.json(await validateDefinition(req.body.definition))
  })

  router.get('/:templateId', validate({ params: templateParamsSchema }), async (req, res) => {
    res.json({ template: await templates.get(currentUser(req), String(req.params.templateId)) })
  })

  router.patch('/:templateId', admin, validate({ params: templateParamsSchema, body: templateUpdateSchema }), async (req, res) => {
    res.json({ template: await templates.update(String(req.params.templateId), req.body, actor(req)) })
  })

  router.get('/:templateId/diff', validate({ params: templateParamsSchema, query: diffQuerySchema }), async (req, res) => {
    const query = req.query as unknown as { from: number; to: number }
    res.json({ diff: await templates.diff(currentUser(req), String(req.params.templateId), query.from, query.to) })
  })

  router.post('/:templateId/versions', admin, validate({ params: templateParamsSchema, body: draftCreateSchema }), async (req, res) => {
    res.status(201).json({ version: await templates.createDraft(String(req.params.templateId), req.body.fromNumber, actor(req)) })
  })

  router.get('/:templateId/versions/:number', validate({ params: versionParamsSchema }), async (req, res) => {
    res.json({ version: await templates.getVersion(currentUser(req), ...versionArgs(req)) })
  })

  router.put('/:templateId/versions/:number', admin, validate({ params: versionParamsSchema, body: draftUpdateSchema }), async (req, res) => {
    res.json({ version: await templates.updateDraft(...versionArgs(req), req.body.definition, req.body.version, actor(req)) })
  })

  router.delete('/:templateId/versions/:number', admin, validate({ params: versionParamsSchema }), async (req, res) => {
    await templates.discardDraft(...versionArgs(req), actor(req))
    res.status(204).end()
  })

  router.post('/:templateId/versions/:number/publish', admin, validate({ params: versionParamsSchema, body: publishSchema }), async (req, res) => {
    res.json({ version: await templates.publish(...versionArgs(req), req.body.changelog, actor(req)) })
  })

  router.post('/:templateId/versions/:number/retire', admin, validate({ params: versionParamsSchema }), async (req, res) => {
    res.json({ version: await templates.retire(...versionArgs(req), actor(req)) })
  })

  return router
}
