import * as yup from 'yup'
import { editVersionSchema } from './edit'

const slug = /^[a-z0-9]+(?:-[a-z0-9]+)*$/

/** `POST /api/templates`: a new template with draft version 1 (a minimal valid definition when none is given). */
export const templateCreateSchema = yup
  .object({
    key: yup
      .string()
      .trim()
      .required('Key is required')
      .max(80, 'Key must be at most 80 characters')
      .matches(slug, 'Key must be lower-case words joined by hyphens, e.g. cooling-tower-startup'),
    name: yup.string().trim().required('Name is required').max(160, 'Name must be at most 160 characters'),
    equipmentKind: yup.string().trim().required('Equipment kind is required').max(60),
    description: yup.string().trim().max(2000, 'Description must be at most 2000 characters').default(''),
    definition: yup.mixed().optional(),
  })
  .noUnknown()
export type TemplateCreateInput = yup.InferType<typeof templateCreateSchema>

/** `PATCH /api/templates/:templateId`: name and description (the key and kind never change). */
export const templateUpdateSchema = yup
  .object({
    name: yup.string().trim().min(1, 'Name is required').max(160, 'Name must be at most 160 characters').optional(),
    description: yup.string().trim().max(2000, 'Description must be at most 2000 characters').optional(),
  })
  .noUnknown()
  .test('not-empty', 'Give at least one of name, description', (v) => v != null && Object.values(v).some((x) => x !== undefined))
export type TemplateUpdateInput = yup.InferType<typeof templateUpdateSchema>

/** `POST /api/templates/validate`: a definition to check (validated by the checklist schema), nothing saved. */
export const draftValidateSchema = yup.object({ definition: yup.mixed().required('definition is required') }).noUnknown()

/**
 * `PUT /api/templates/:templateId/versions/:number`: the whole definition of a draft (validated by the checklist
 * schema) and the draft's `version` it was edited on; a save made on an older version is refused (409 `edit_conflict`).
 */
export const draftUpdateSchema = yup
  .object({ definition: yup.mixed().required('definition is required'), version: editVersionSchema })
  .noUnknown()
export type DraftUpdateInput = yup.InferType<typeof draftUpdateSchema>

/** `POST /api/templates/:templateId/versions`: open the next draft, copied from `fromNumber` (default: newest version). */
export const draftCreateSchema = yup
  .object({ fromNumber: yup.number().typeError('fromNumber must be a number').integer().min(1).optional() })
  .noUnknown()

/** `POST …/versions/:number/publish`: a changelog entry is required. */
export const publishSchema = yup
  .object({
    changelog: yup
      .string()
      .trim()
      .required('Changelog is required: say what changed and why')
      .min(3, 'Changelog must be at least 3 characters')
      .max(4000, 'Changelog must be at most 4000 characters'),
  })
  .noUnknown()

/** `GET /api/templates/:templateId/diff?from=&to=`. */
export const diffQuerySchema = yup
  .object({
    from: yup.number().typeError('from must be a version number').integer('from must be a whole number').min(1).required('from is required'),
    to: yup.number().typeError('to must be a version number').integer('to must be a whole number').min(1).required('to is required'),
  })
  .noUnknown()

export const templateParamsSchema = yup.object({
  templateId: yup
    .string()
    .required()
    .matches(/^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i, '${path} must be a UUID'),
})
export const versionParamsSchema = templateParamsSchema.shape({
  number: yup.number().typeError('${path} must be a version number').integer().min(1).required(),
})
