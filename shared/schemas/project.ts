import * as yup from 'yup'
import { BAROMETRIC_RANGE_KPA, ELEVATION_RANGE_M } from '../engineering/atmosphere'
import { formatNumber } from '../units/format'
import { changesSomething, confirmVoidSchema, editVersionSchema } from './edit'

/** Whether `zone` is an IANA time zone this runtime knows (e.g. `America/Chicago`). */
export function isTimeZone(zone: unknown): boolean {
  if (typeof zone !== 'string' || !zone) return false
  try {
    new Intl.DateTimeFormat('en-US', { timeZone: zone })
    return true
  } catch {
    return false
  }
}

const code = yup
  .string()
  .trim()
  .uppercase()
  .required('Project code is required')
  .matches(/^[A-Z0-9][A-Z0-9-]{1,19}$/, 'Project code must be 2–20 letters, digits or hyphens, e.g. VXH-CUP')

// A number or null, never a string or a boolean coerced into one: the site's pressure converts every gauge reading.
const strictNumber = (label: string) =>
  yup
    .number()
    .transform((v, original) => (typeof original === 'number' || original === null || original === undefined ? v : Number.NaN))
    .typeError(`${label} must be a number`)
    .nullable()

/** Site elevation in metres (ELEVATION_RANGE_M), or null. */
const siteElevation = () =>
  strictNumber('Site elevation')
    .min(ELEVATION_RANGE_M.min, `Site elevation must be at least ${formatNumber(ELEVATION_RANGE_M.min, 0)} m`)
    .max(ELEVATION_RANGE_M.max, `Site elevation must be at most ${ELEVATION_RANGE_M.max} m`)

/** Site barometric pressure in kPa (BAROMETRIC_RANGE_KPA), or null. */
const barometric = () =>
  strictNumber('Site barometric pressure')
    .min(BAROMETRIC_RANGE_KPA.min, `Site barometric pressure must be at least ${BAROMETRIC_RANGE_KPA.min} kPa`)
    .max(BAROMETRIC_RANGE_KPA.max, `Site barometric pressure must be at most ${BAROMETRIC_RANGE_KPA.max} kPa`)

const fields = {
  code,
  name: yup.string().trim().required('Name is required').max(200, 'Name must be at most 200 characters'),
  siteName: yup.string().trim().required('Site name is required').max(200, 'Site name must be at most 200 characters'),
  siteAddress: yup.string().trim().required('Site address is required').max(400, 'Site address must be at most 400 characters'),
  timeZone: yup
    .string()
    .trim()
    .required('Time zone is required')
    .test('iana', 'Time zone must be an IANA zone such as America/Chicago', (v) => v === undefined || isTimeZone(v)),
  unitSystem: yup
    .mixed<'IP' | 'SI'>()
    .required('Unit system is required')
    .oneOf(['IP', 'SI'], 'Unit system must be IP or SI'),
  reportPaper: yup.mixed<'A4' | 'Letter'>().oneOf(['A4', 'Letter'], 'Report paper must be A4 or Letter').default('Letter'),
  siteElevationM: siteElevation().default(null),
  barometricKpa: barometric().default(null),
  distributionList: yup
    .array(yup.string().trim().lowercase().required().email('${value} is not a valid email address'))
    .max(50, 'The distribution list takes at most 50 addresses')
    .default([])
    .test('unique', 'The distribution list repeats an address', (list) => !list || new Set(list).size === list.length),
}

/** `POST /api/projects`. */
export const projectCreateSchema = yup.object(fields).noUnknown()
export type ProjectCreateInput = yup.InferType<typeof projectCreateSchema>

/**
 * `PATCH /api/projects/:projectId`: any of the fields, at least one, and the `version` they were edited on. Changing
 * the name, code, site, units or time zone re-judges the project's runs in progress; for a submitted run it voids the
 * performer's signature, so the server asks for `confirmVoid: true` first (409 `affects_signed_runs`).
 */
export const projectUpdateSchema = yup
  .object({
    version: editVersionSchema,
    confirmVoid: confirmVoidSchema,
    code: code.optional().default(undefined),
    name: fields.name.optional().default(undefined),
    siteName: fields.siteName.optional().default(undefined),
    siteAddress: fields.siteAddress.optional().default(undefined),
    timeZone: fields.timeZone.optional().default(undefined),
    unitSystem: yup.mixed<'IP' | 'SI'>().oneOf(['IP', 'SI'], 'Unit system must be IP or SI').optional(),
    distributionList: fields.distributionList.optional().default(undefined),
    reportPaper: yup.mixed<'A4' | 'Letter'>().oneOf(['A4', 'Letter'], 'Report paper must be A4 or Letter').optional(),
    siteElevationM: siteElevation().optional().default(undefined),
    barometricKpa: barometric().optional().default(undefined),
  })
  .noUnknown()
  .test('not-empty', 'Give at least one field to change', (v) => changesSomething(v))
export type ProjectUpdateInput = yup.InferType<typeof projectUpdateSchema>
