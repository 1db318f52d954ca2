import { boolean, number, object, string, type InferType } from 'yup'
import { REFRIGERANTS } from '../engineering/refrigerant'
import { isUnitOf, toCanonical, unitsOf, type QuantityKind } from '../units/quantities'

/** Every numeric design-point value and the quantity kind it measures. */
export const DESIGN_POINT_QUANTITIES = {
  capacity: 'cooling_capacity',
  evaporatorEnteringWaterTemp: 'temperature',
  evaporatorLeavingWaterTemp: 'temperature',
  evaporatorWaterFlow: 'volumetric_flow',
  evaporatorPressureDrop: 'pressure_differential',
  condenserEnteringWaterTemp: 'temperature',
  condenserLeavingWaterTemp: 'temperature',
  condenserWaterFlow: 'volumetric_flow',
  condenserPressureDrop: 'pressure_differential',
  designKwPerTon: 'specific_power',
  inputPower: 'power',
  voltage: 'voltage',
  frequency: 'frequency',
  fullLoadAmps: 'current',
  oilPressureSetpoint: 'pressure_differential',
} as const satisfies Record<string, QuantityKind>

export type DesignPointKey = keyof typeof DESIGN_POINT_QUANTITIES
export const DESIGN_POINT_KEYS = Object.keys(DESIGN_POINT_QUANTITIES) as DesignPointKey[]

/** True when `key` names a numeric design-point value. */
export function isDesignPointKey(key: unknown): key is DesignPointKey {
  return typeof key === 'string' && Object.hasOwn(DESIGN_POINT_QUANTITIES, key)
}

/** A yup number that refuses NaN and ±Infinity with a message naming the path. */
export function finiteNumber() {
  return number()
    .typeError('${path} must be a number')
    .test('finite', '${path} must be a finite number', (v) => v === undefined || Number.isFinite(v))
}

/** A yup schema for `{ value, unit }` where the unit must measure `kind`; `positive` refuses zero and below. */
export function quantitySchema(kind: QuantityKind, options: { positive?: boolean } = {}) {
  const accepted = unitsOf(kind).map((u) => u.id)
  return object({
    value: finiteNumber()
      .required('${path} is required')
      .test('positive', '${path} must be greater than zero', (v) => !options.positive || v === undefined || v > 0),
    unit: string()
      .required('${path} is required')
      .test('unit-of-kind', `\${path} must be one of ${accepted.join(', ')}`, (u) => u === undefined || isUnitOf(kind, u)),
  })
    .exact('${path} has unknown keys: ${properties}')
    .default(undefined)
}

const required = (kind: QuantityKind, positive = false) => quantitySchema(kind, { positive }).required('${path} is required')
const optional = (kind: QuantityKind, positive = false) => quantitySchema(kind, { positive }).optional()

function canonicalOrNull(q: { value?: number; unit?: string } | undefined, kind: QuantityKind): number | null {
  if (!q || typeof q.value !== 'number' || !Number.isFinite(q.value) || !isUnitOf(kind, q.unit)) return null
  return toCanonical(q.value, q.unit as string, kind)
}

/** Equipment design point (DESIGN.md §4): every number carries its unit. */
export const designPointSchema = object({
  refrigerant: string()
    .required('${path} is required')
    .oneOf([...REFRIGERANTS], `\${path} must be one of ${REFRIGERANTS.join(', ')}`),
  capacity: required('cooling_capacity', true),
  evaporatorEnteringWaterTemp: required('temperature'),
  evaporatorLeavingWaterTemp: required('temperature'),
  evaporatorWaterFlow: required('volumetric_flow', true),
  evaporatorPressureDrop: optional('pressure_differential', true),
  condenserEnteringWaterTemp: required('temperature'),
  condenserLeavingWaterTemp: required('temperature'),
  condenserWaterFlow: required('volumetric_flow', true),
  condenserPressureDrop: optional('pressure_differential', true),
  designKwPerTon: optional('specific_power', true),
  inputPower: optional('power', true),
  voltage: optional('voltage', true),
  frequency: optional('frequency', true),
  fullLoadAmps: optional('current', true),
  oilPressureSetpoint: optional('pressure_differential', true),
  variableSpeedDrive: boolean().optional(),
})
  .exact('design point has unknown keys: ${properties}')
  .test('evaporator-drop', function (dp) {
    const entering = canonicalOrNull(dp?.evaporatorEnteringWaterTemp, 'temperature')
    const leaving = canonicalOrNull(dp?.evaporatorLeavingWaterTemp, 'temperature')
    if (entering === null || leaving === null || entering > leaving) return true
    return this.createError({ path: 'evaporatorLeavingWaterTemp.value', message: 'evaporator leaving water must be colder than entering water' })
  })
  .test('condenser-rise', function (dp) {
    const entering = canonicalOrNull(dp?.condenserEnteringWaterTemp, 'temperature')
    const leaving = canonicalOrNull(dp?.condenserLeavingWaterTemp, 'temperature')
    if (entering === null || leaving === null || leaving > entering) return true
    return this.createError({ path: 'condenserLeavingWaterTemp.value', message: 'condenser leaving water must be warmer than entering water' })
  })

export type DesignPoint = InferType<typeof designPointSchema>
