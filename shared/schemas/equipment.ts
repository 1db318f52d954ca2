import * as yup from 'yup'
import { EQUIPMENT_KINDS, designPointSchemaFor, type EquipmentKind } from './design-point'
import { changesSomething, confirmVoidSchema, editVersionSchema } from './edit'

const tag = yup
  .string()
  .trim()
  .uppercase()
  .required('Tag is required')
  .matches(/^[A-Z0-9][A-Z0-9-]{0,23}$/, 'Tag must be letters, digits and hyphens, e.g. CH-2')

const text = (label: string, max: number) => yup.string().trim().required(`${label} is required`).max(max, `${label} must be at most ${max} characters`)

const nameplate = {
  location: yup.string().trim().max(200, 'Location must be at most 200 characters').default(''),
  manufacturer: text('Manufacturer', 120),
  model: text('Model', 120),
  serialNumber: text('Serial number', 120),
  yearBuilt: yup
    .number()
    .typeError('Year built must be a year')
    .integer('Year built must be a whole year')
    .min(1950, 'Year built must be 1950 or later')
    .max(2100, 'Year built must be 2100 or earlier')
    .nullable()
    .default(null),
  notes: yup.string().trim().max(4000, 'Notes must be at most 4000 characters').default(''),
}

/** The design point is checked against the schema of the equipment's kind (a pump has no refrigerant). */
const designPointFor = (kind: unknown) =>
  (EQUIPMENT_KINDS as readonly string[]).includes(kind as string)
    ? designPointSchemaFor(kind as EquipmentKind).required('Design point is required')
    : yup.mixed().required('Design point is required')

/** `POST /api/projects/:projectId/equipment`. */
export const equipmentCreateSchema = yup
  .object({
    tag,
    kind: yup
      .mixed<EquipmentKind>()
      .required('Kind is required')
      .oneOf([...EQUIPMENT_KINDS], `Kind must be one of ${EQUIPMENT_KINDS.join(', ')}`),
    ...nameplate,
    designPoint: yup.lazy((_value, options) => designPointFor((options.parent as { kind?: unknown })?.kind)),
  })
  .noUnknown()
export type EquipmentCreateInput = yup.InferType<typeof equipmentCreateSchema>

/**
 * `PATCH /api/equipment/:equipmentId`: the kind never changes; a design point given replaces the whole one; `version` is
 * the one the edit was made on. Changing the tag, nameplate or design point re-judges the item's runs in progress; for a
 * submitted run it voids the performer's signature, so the server asks for `confirmVoid: true` first.
 */
export function equipmentUpdateSchema(kind: EquipmentKind) {
  return yup
    .object({
      version: editVersionSchema,
      confirmVoid: confirmVoidSchema,
      tag: tag.optional().default(undefined),
      location: nameplate.location.optional().default(undefined),
      manufacturer: nameplate.manufacturer.optional().default(undefined),
      model: nameplate.model.optional().default(undefined),
      serialNumber: nameplate.serialNumber.optional().default(undefined),
      yearBuilt: nameplate.yearBuilt.optional().default(undefined),
      notes: nameplate.notes.optional().default(undefined),
      designPoint: designPointSchemaFor(kind).optional().default(undefined),
    })
    .noUnknown()
    .test('not-empty', 'Give at least one field to change', (v) => changesSomething(v))
}
export type EquipmentUpdateInput = yup.InferType<ReturnType<typeof equipmentUpdateSchema>>
