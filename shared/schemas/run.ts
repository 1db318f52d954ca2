import * as yup from 'yup'
import { dispositionSchema, normalizeDisposition, type Disposition } from '../record/disposition'
import { changesSomething, editVersionSchema } from './edit'

const uuid = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i
const uuidString = () => yup.string().required('${path} is required').matches(uuid, '${path} must be a UUID')

/** `POST /api/equipment/:equipmentId/runs`: start a run from the newest published version of a template. */
export const runCreateSchema = yup.object({ templateId: uuidString() }).noUnknown()

export const runParamsSchema = yup.object({ runId: uuidString() })
export const readingParamsSchema = runParamsSchema.shape({
  fieldId: yup.string().required().matches(/^[A-Za-z][A-Za-z0-9_]{0,63}$/, '${path} is not a field id'),
})
export const stepParamsSchema = runParamsSchema.shape({
  stepId: yup.string().required().matches(/^[A-Za-z0-9][A-Za-z0-9_.-]{0,63}$/, '${path} is not a step id'),
})

const reason = yup.string().trim().max(2000, '${path} must be at most 2000 characters')

/**
 * The signed-in person who made a change (queued offline, it may be sent much later): the server refuses a change whose
 * author is not the session's user, so a shared tablet never sends one person's work under another's name.
 */
const authorId = yup.string().matches(uuid, '${path} must be a UUID').optional()

/**
 * `PUT /api/runs/:runId/readings/:fieldId`. `changeId` makes a retry harmless; `baseVersion` is the field version the
 * change was made on (0 for a field nobody has set), so a change made on stale data is a conflict, never an overwrite.
 * The entry itself is checked against the field's own schema on the server (`entrySchemaFor`).
 */
export const readingChangeSchema = yup
  .object({
    changeId: uuidString(),
    authorId,
    baseVersion: yup.number().typeError('${path} must be a number').integer().min(0).required('${path} is required'),
    entry: yup.mixed().nullable().default(null),
    /** Why the field has no reading of its own; null clears it. */
    disposition: dispositionSchema.nullable().default(null),
    /** Older clients: `notApplicable` with `naReason` is the not-applicable disposition. */
    notApplicable: yup.boolean().strict().default(false),
    naReason: reason.nullable().default(null),
    justification: reason.nullable().default(null),
  })
  .noUnknown()
  .test('na-reason', 'A reason is required when a field is marked not applicable', function (v) {
    if (!v?.notApplicable || (v.naReason && v.naReason.trim())) return true
    return this.createError({ path: 'naReason', message: 'A reason is required when a field is marked not applicable' })
  })
export type ReadingChangeInput = Omit<yup.InferType<typeof readingChangeSchema>, 'disposition'> & { disposition?: Disposition | null }

/** `PUT /api/runs/:runId/steps/:stepId`: the step's note and not-applicable state. */
export const stepChangeSchema = yup
  .object({
    changeId: uuidString(),
    authorId,
    baseVersion: yup.number().typeError('${path} must be a number').integer().min(0).required('${path} is required'),
    note: yup.string().max(8000, '${path} must be at most 8000 characters').default(''),
    disposition: dispositionSchema.nullable().default(null),
    notApplicable: yup.boolean().strict().default(false),
    naReason: reason.nullable().default(null),
  })
  .noUnknown()
  .test('na-reason', 'A reason is required when a step is marked not applicable', function (v) {
    if (!v?.notApplicable || (v.naReason && v.naReason.trim())) return true
    return this.createError({ path: 'naReason', message: 'A reason is required when a step is marked not applicable' })
  })
export type StepChangeInput = Omit<yup.InferType<typeof stepChangeSchema>, 'disposition'> & { disposition?: Disposition | null }

/** The disposition a reading or step change asks for: the structured one, or an older client's "not applicable". */
export function requestedDisposition(input: { disposition?: Partial<Disposition> | null; notApplicable?: boolean; naReason?: string | null }): Disposition | null {
  if (input.disposition?.kind) return normalizeDisposition(input.disposition as Disposition)
  if (input.notApplicable) return normalizeDisposition({ kind: 'not_applicable', reason: input.naReason ?? null })
  return null
}

export const FINDING_SEVERITIES = ['minor', 'major', 'critical'] as const

/** `POST /api/runs/:runId/findings`. */
export const findingCreateSchema = yup
  .object({
    stepId: yup.string().required('Step is required'),
    fieldId: yup.string().nullable().default(null),
    severity: yup.mixed<(typeof FINDING_SEVERITIES)[number]>().required('Severity is required').oneOf([...FINDING_SEVERITIES], 'Severity must be minor, major or critical'),
    description: yup.string().trim().required('Describe the deficiency').max(4000, 'Description must be at most 4000 characters'),
  })
  .noUnknown()
export type FindingCreateInput = yup.InferType<typeof findingCreateSchema>

/**
 * `PATCH /api/runs/:runId/findings/:findingId`: edit, resolve (with how) or reopen, with the finding's `version` the edit
 * was made on; an edit made on an older version is refused (409 `edit_conflict`).
 */
export const findingUpdateSchema = yup
  .object({
    version: editVersionSchema,
    severity: yup.mixed<(typeof FINDING_SEVERITIES)[number]>().oneOf([...FINDING_SEVERITIES], 'Severity must be minor, major or critical').optional(),
    description: yup.string().trim().min(1, 'Describe the deficiency').max(4000).optional(),
    status: yup.mixed<'open' | 'resolved'>().oneOf(['open', 'resolved'], 'Status must be open or resolved').optional(),
    resolution: yup.string().trim().max(4000).optional(),
  })
  .noUnknown()
  .test('resolution', 'Say how it was resolved', function (v) {
    if (v?.status !== 'resolved' || (v.resolution && v.resolution.trim())) return true
    return this.createError({ path: 'resolution', message: 'Say how it was resolved' })
  })
  .test('not-empty', 'Give at least one field to change', (v) => changesSomething(v))
export type FindingUpdateInput = yup.InferType<typeof findingUpdateSchema>

export const findingParamsSchema = runParamsSchema.shape({ findingId: uuidString() })
export const attachmentParamsSchema = runParamsSchema.shape({ attachmentId: uuidString() })

/** Multipart fields sent with `POST /api/runs/:runId/attachments` (the file itself is the `file` part). */
export const attachmentFieldsSchema = yup
  .object({
    stepId: yup.string().required('stepId is required'),
    fieldId: yup.string().optional(),
    findingId: yup.string().matches(uuid, 'findingId must be a UUID').optional(),
  })
  .noUnknown()

/** `GET /api/runs`. */
export const runListQuerySchema = yup
  .object({
    state: yup.mixed<'in_progress' | 'submitted' | 'accepted' | 'returned'>().oneOf(['in_progress', 'submitted', 'accepted', 'returned'], 'state must be in_progress, submitted, accepted or returned').optional(),
    projectId: yup.string().matches(uuid, 'projectId must be a UUID').optional(),
    equipmentId: yup.string().matches(uuid, 'equipmentId must be a UUID').optional(),
    mine: yup.boolean().optional(),
    limit: yup.number().typeError('limit must be a whole number from 1 to 200').integer('limit must be a whole number from 1 to 200').min(1, 'limit must be a whole number from 1 to 200').max(200, 'limit must be a whole number from 1 to 200').optional(),
    cursor: yup.string().max(200, 'cursor is not one this list gave out').optional(),
  })
  .noUnknown()

/** A drawn signature from signature_pad: a PNG data URL of a sensible size. */
const signatureImage = yup
  .string()
  .required('Draw your signature')
  .matches(/^data:image\/png;base64,[A-Za-z0-9+/]+=*$/, 'The signature must be a PNG image')
  .max(400_000, 'The signature image is too large')

/** `POST /api/runs/:runId/sign`: the signer's password again (two components at signing, 21 CFR 11.200), meaning and drawing. */
export const signSchema = yup
  .object({
    meaning: yup.mixed<'performed_by' | 'accepted_by'>().required('State what the signature means').oneOf(['performed_by', 'accepted_by'], 'Meaning must be performed_by or accepted_by'),
    password: yup.string().required('Enter your password to sign').max(200),
    signatureImage,
    /** The SHA-256 of the run as the signer reviewed it (from the review summary); a run that changed since is refused. */
    snapshotSha256: yup.string().required('snapshotSha256 is required').matches(/^[0-9a-f]{64}$/, 'snapshotSha256 must be 64 hex digits'),
    /** Acceptance: the ids of the review's exceptions, each acknowledged by the owner's representative. */
    acknowledgedExceptions: yup
      .array(yup.string().required().max(200, '${path} is not an exception id'))
      .max(2000, '${path} lists too many exceptions')
      .optional(),
  })
  .noUnknown()
export type SignInput = yup.InferType<typeof signSchema>

/** `POST /api/runs/:runId/return`: the owner's representative sends the run back with comments. */
export const returnSchema = yup
  .object({
    comments: yup.string().trim().required('Say what must change').min(3, 'Say what must change').max(4000, 'Comments must be at most 4000 characters'),
    password: yup.string().required('Enter your password to return the run').max(200),
  })
  .noUnknown()
export type ReturnInput = yup.InferType<typeof returnSchema>
