import * as yup from 'yup'
import { CLOSEOUT_CATEGORIES, type CloseoutCategory } from '../types/archive'

const uuid = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i
const id = (name: string) => yup.string().matches(uuid, `${name} must be a UUID`).optional()
const day = (name: string) =>
  yup
    .string()
    .matches(/^\d{4}-\d{2}-\d{2}$/, `${name} must be a date written YYYY-MM-DD`)
    .test('real-date', `${name} is not a real date`, (v) => !v || (!Number.isNaN(Date.parse(`${v}T00:00:00Z`)) && new Date(`${v}T00:00:00Z`).toISOString().startsWith(v)))
    .optional()

/** `GET /api/archive`: filters, text search, sort and keyset pagination over issued reports. */
export const archiveQuerySchema = yup
  .object({
    projectId: id('projectId'),
    equipmentId: id('equipmentId'),
    templateId: id('templateId'),
    technicianId: id('technicianId'),
    from: day('from'),
    to: day('to'),
    hasFails: yup.boolean().typeError('hasFails must be true or false').optional(),
    hasOpenFindings: yup.boolean().typeError('hasOpenFindings must be true or false').optional(),
    q: yup.string().trim().max(200, 'q must be at most 200 characters').optional(),
    sort: yup.mixed<'newest' | 'oldest'>().oneOf(['newest', 'oldest'], 'sort must be newest or oldest').default('newest'),
    limit: yup.number().typeError('limit must be a number').integer('limit must be a whole number').min(1, 'limit must be 1 to 100').max(100, 'limit must be 1 to 100').default(25),
    cursor: yup.string().max(200).matches(/^[A-Za-z0-9_-]+$/, 'cursor is not valid').optional(),
  })
  .noUnknown()
  .test('range', 'from must not be after to', function (v) {
    if (!v?.from || !v.to || v.from <= v.to) return true
    return this.createError({ path: 'from', message: 'from must not be after to' })
  })
export type ArchiveQuery = yup.InferType<typeof archiveQuerySchema>

/** `POST /api/projects/:projectId/closeout-documents` (multipart: these fields and `file`). */
export const closeoutDocumentSchema = yup
  .object({
    title: yup.string().trim().required('title is required').max(200, 'title must be at most 200 characters'),
    category: yup
      .mixed<CloseoutCategory>()
      .required('category is required')
      .oneOf([...CLOSEOUT_CATEGORIES], `category must be one of ${CLOSEOUT_CATEGORIES.join(', ')}`),
    documentDate: day('documentDate')
      .required('documentDate is required')
      .test('not-future', 'documentDate must not be in the future', (v) => !v || v <= new Date(Date.now() + 14 * 3600_000).toISOString().slice(0, 10)),
  })
  .exact('the form has fields it does not take: ${properties}')
export type CloseoutDocumentInput = yup.InferType<typeof closeoutDocumentSchema>

/** `POST /api/archive/export`: a handover package of a whole project, or of chosen reports. */
export const archiveExportSchema = yup
  .object({
    projectId: yup.string().matches(uuid, 'projectId must be a UUID').optional(),
    reportNumbers: yup
      .array(yup.string().trim().required().max(40, 'each report number must be at most 40 characters'))
      .min(1, 'reportNumbers must name at least one report')
      .max(500, 'reportNumbers may name at most 500 reports')
      .optional(),
  })
  .exact('the request has keys it does not take: ${properties}')
  .test('one-of', 'Give projectId or reportNumbers, not both', function (v) {
    if (!v) return true
    if (!v.projectId === !v.reportNumbers) return this.createError({ path: 'projectId', message: 'Give either projectId or reportNumbers' })
    return true
  })
export type ArchiveExportInput = yup.InferType<typeof archiveExportSchema>
