import * as yup from 'yup'

/**
 * The version of the record an edit was made on. The server refuses an edit made on an older version (409
 * `edit_conflict`, with the record as it is now), so two people editing at once never silently overwrite each other.
 */
export const editVersionSchema = yup
  .number()
  .typeError('${path} must be a whole number')
  .integer('${path} must be a whole number')
  .min(1, '${path} must be 1 or more')
  .required('${path} is required: send the version of the record you edited')

/**
 * Set to go ahead with a change that voids a performer's signature on a submitted run (the server names those runs in
 * a 409 `affects_signed_runs` first).
 */
export const confirmVoidSchema = yup.boolean().strict().typeError('${path} must be true or false').optional()

/** The members of an edit body that say how to apply it, not what to change. */
export const EDIT_CONTROL_KEYS = ['version', 'confirmVoid'] as const

/** True when an edit body names at least one thing to change besides its version and confirmation. */
export function changesSomething(value: Record<string, unknown> | null | undefined): boolean {
  if (value == null) return false
  return Object.entries(value).some(([key, v]) => !(EDIT_CONTROL_KEYS as readonly string[]).includes(key) && v !== undefined)
}
