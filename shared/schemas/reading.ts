import { array, boolean, lazy, mixed, object, string, tuple, type InferType } from 'yup'
import { isUnitOf, unitsOf } from '../units/quantities'
import type { ChecklistField } from './checklist'
import { finiteNumber } from './design-point'

const finite = finiteNumber

/** A measured number with its unit, as entered: `{ value: 18, unit: 'psid' }`. */
export const numberEntrySchema = object({
  value: finite().required('${path} is required'),
  unit: string().required('${path} is required'),
}).exact('${path} has unknown keys: ${properties}')

/** A yes/no answer. */
export const yesNoEntrySchema = object({ value: boolean().strict().required('${path} is required') }).exact('${path} has unknown keys: ${properties}')

/** A choice (its value) or free text. */
export const textEntrySchema = object({ value: string().strict().required('${path} is required') }).exact('${path} has unknown keys: ${properties}')

/** Attachment ids of the photos taken for the field. */
export const photoEntrySchema = object({
  value: array(string().required()).required('${path} is required').min(1, '${path} needs at least one photo'),
}).exact('${path} has unknown keys: ${properties}')

/** A time series: `[seconds from the start command, reading]` points, their unit, and when the drive started. */
export const seriesEntrySchema = object({
  value: array(tuple([finite().required(), finite().required()]).required())
    .required('${path} is required')
    .min(2, '${path} needs at least two points')
    .test('increasing', '${path} times must increase from point to point', (pts) =>
      !pts || pts.every((p, i) => i === 0 || (p?.[0] ?? 0) > (pts[i - 1]?.[0] ?? 0)),
    ),
  unit: string().required('${path} is required'),
  driveStartS: finite().min(0, '${path} must not be negative').optional(),
}).exact('${path} has unknown keys: ${properties}')

export type NumberEntry = InferType<typeof numberEntrySchema>
export type YesNoEntry = InferType<typeof yesNoEntrySchema>
export type TextEntry = InferType<typeof textEntrySchema>
export type PhotoEntry = InferType<typeof photoEntrySchema>
export type SeriesEntry = Omit<InferType<typeof seriesEntrySchema>, 'value'> & { value: Array<[number, number]> }
export type FieldEntry = NumberEntry | YesNoEntry | TextEntry | PhotoEntry | SeriesEntry

/** Any entry, told apart by its shape (the field it belongs to decides which shape is right). */
export const fieldEntrySchema = lazy((entry: unknown) => {
  const e = entry as { value?: unknown; unit?: unknown } | null | undefined
  if (e === null || e === undefined) return mixed().nullable().optional()
  if (Array.isArray(e.value)) return e.unit !== undefined ? seriesEntrySchema : photoEntrySchema
  if (typeof e.value === 'boolean') return yesNoEntrySchema
  if (typeof e.value === 'string' && e.unit === undefined) return textEntrySchema
  return numberEntrySchema
})

/** A reading as the client sends it: the field, its entry (null clears it) and an optional remark. */
export const readingSchema = object({
  fieldId: string().required('${path} is required').max(64, '${path} is too long'),
  entry: fieldEntrySchema,
  note: string().trim().max(2000, '${path} must be at most 2000 characters').optional(),
}).exact('${path} has unknown keys: ${properties}')

export type Reading = Omit<InferType<typeof readingSchema>, 'entry'> & { entry?: FieldEntry | null }

const unitOfField = (field: ChecklistField) =>
  string()
    .required('${path} is required')
    .test('unit-of-field', `\${path} must be one of ${field.quantity ? unitsOf(field.quantity).map((u) => u.id).join(', ') : ''}`, (u) =>
      u === undefined || (field.quantity !== undefined && isUnitOf(field.quantity, u)),
    )

/** The exact entry schema for one field: its kind's shape, units of its quantity, one of its choices. */
export function entrySchemaFor(field: ChecklistField) {
  switch (field.kind) {
    case 'number':
    case 'timer':
      return numberEntrySchema.shape({ unit: unitOfField(field) })
    case 'time_series':
      return seriesEntrySchema.shape({ unit: unitOfField(field) })
    case 'yes_no':
      return yesNoEntrySchema
    case 'choice': {
      const values = (field.choices ?? []).map((c) => c.value)
      return textEntrySchema.shape({
        value: string().strict().required('${path} is required').oneOf(values, `\${path} must be one of ${values.join(', ')}`),
      })
    }
    case 'text':
      return textEntrySchema
    case 'photo':
      return photoEntrySchema
  }
}
