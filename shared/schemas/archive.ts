import * as yup from 'yup'

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
