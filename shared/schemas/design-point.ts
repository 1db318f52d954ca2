import { boolean, number, object, string, type InferType } from 'yup'
import { REFRIGERANTS } from '../engineering/refrigerant'
import { isUnitOf, toCanonical, unitsOf, type QuantityKind } from '../units/quantities'

/** The kinds of equipment Startproof commissions; each has its own design point. */
export const EQUIPMENT_KINDS = ['centrifugal_chiller', 'pump'] as const
export type EquipmentKind = (typeof EQUIPMENT_KINDS)[number]

/** Plain-English names of the equipment kinds. */
export const EQUIPMENT_KIND_LABELS: Readonly<Record<EquipmentKind, string>> = {
  centrifugal_chiller: 'Water-cooled centrifugal chiller',
  pump: 'Pump (chilled or condenser water)',
}

/** True when `kind` names one of the equipment kinds. */
export function isEquipmentKind(kind: unknown): kind is EquipmentKind {
  return typeof kind === 'string' && (EQUIPMENT_KINDS as readonly string[]).includes(kind)
}

/**
 * Every numeric design-point value of every equipment kind and the quantity kind it measures. Checklist rules and
 * `design.<key>` in expressions name these keys; `designPointKeysFor(kind)` says which belong to which equipment.
 */
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
  chilledWaterSetpointMin: 'temperature',
  chilledWaterSetpointMax: 'temperature',
  pumpDesignFlow: 'volumetric_flow',
  pumpDesignHead: 'pressure_differential',
  motorRatedPower: 'power',
  motorRatedSpeed: 'rotational_speed',
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

/** Equipment design point: every number carries its unit. */
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
  chilledWaterSetpointMin: optional('temperature'),
  chilledWaterSetpointMax: optional('temperature'),
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
  .test('setpoint-range', function (dp) {
    const low = canonicalOrNull(dp?.chilledWaterSetpointMin, 'temperature')
    const high = canonicalOrNull(dp?.chilledWaterSetpointMax, 'temperature')
    if (low === null || high === null || high > low) return true
    return this.createError({ path: 'chilledWaterSetpointMax.value', message: 'the highest allowed chilled-water setpoint must be above the lowest' })
  })

type ChillerShape = InferType<typeof designPointSchema>
/**
 * Design point of a water-cooled centrifugal chiller. The other kinds' keys are typed as absent, so any
 * `DesignPointKey` may index it (`designPoint[key]` is undefined for a pump value).
 */
export type DesignPoint = ChillerShape & { [K in Exclude<DesignPointKey, keyof ChillerShape>]?: undefined }

/** What a pump moves: chilled water or condenser water. */
export const PUMP_SERVICES = ['chilled_water', 'condenser_water'] as const
export type PumpService = (typeof PUMP_SERVICES)[number]

/**
 * Design point of a chilled-water or condenser-water pump: the pump curve point (flow and total dynamic head, as a
 * differential pressure such as ft of water or kPa) and the motor nameplate.
 */
export const pumpDesignPointSchema = object({
  pumpService: string()
    .oneOf([...PUMP_SERVICES], `\${path} must be one of ${PUMP_SERVICES.join(', ')}`)
    .optional(),
  pumpDesignFlow: required('volumetric_flow', true),
  pumpDesignHead: required('pressure_differential', true),
  motorRatedPower: required('power', true),
  motorRatedSpeed: required('rotational_speed', true),
  voltage: required('voltage', true),
  frequency: optional('frequency', true),
  fullLoadAmps: required('current', true),
  variableSpeedDrive: boolean().optional(),
})
  .exact('design point has unknown keys: ${properties}')
  .test('speed-below-synchronous', function (dp) {
    // An induction motor runs below its synchronous speed 120·f / poles; two poles give the fastest, 60·f r/min.
    const speed = canonicalOrNull(dp?.motorRatedSpeed, 'rotational_speed')
    const hz = canonicalOrNull(dp?.frequency, 'frequency')
    if (speed === null || hz === null || speed <= 2 * Math.PI * hz + 1e-9) return true
    return this.createError({ path: 'motorRatedSpeed.value', message: `rated speed is above ${Math.round(60 * hz)} rpm, the two-pole synchronous speed at ${hz} Hz` })
  })

type PumpShape = InferType<typeof pumpDesignPointSchema>
/** Design point of a pump; the chiller's keys are typed as absent, as for `DesignPoint`. */
export type PumpDesignPoint = PumpShape & { [K in Exclude<DesignPointKey, keyof PumpShape>]?: undefined }

/** A design point of any equipment kind (what rules and expressions read from). */
export type AnyDesignPoint = DesignPoint | PumpDesignPoint

/** The design point schema of one equipment kind. */
export function designPointSchemaFor(kind: 'centrifugal_chiller'): typeof designPointSchema
export function designPointSchemaFor(kind: 'pump'): typeof pumpDesignPointSchema
export function designPointSchemaFor(kind: EquipmentKind): typeof designPointSchema | typeof pumpDesignPointSchema
export function designPointSchemaFor(kind: EquipmentKind): typeof designPointSchema | typeof pumpDesignPointSchema {
  switch (kind) {
    case 'centrifugal_chiller':
      return designPointSchema
    case 'pump':
      return pumpDesignPointSchema
    default:
      throw new Error(`Unknown equipment kind "${String(kind)}" (have: ${EQUIPMENT_KINDS.join(', ')})`)
  }
}

/** Every key a design point form may show: the numeric values and the refrigerant, drive and service choices. */
export type DesignPointFieldKey = DesignPointKey | 'refrigerant' | 'variableSpeedDrive' | 'pumpService'

/** Plain-English label of each design-point key, for forms, reports and messages. */
export const DESIGN_POINT_LABELS: Readonly<Record<DesignPointFieldKey, string>> = {
  refrigerant: 'Refrigerant',
  capacity: 'Cooling capacity',
  evaporatorEnteringWaterTemp: 'Evaporator entering water temperature',
  evaporatorLeavingWaterTemp: 'Evaporator leaving water temperature',
  evaporatorWaterFlow: 'Evaporator water flow',
  evaporatorPressureDrop: 'Evaporator water pressure drop',
  condenserEnteringWaterTemp: 'Condenser entering water temperature',
  condenserLeavingWaterTemp: 'Condenser leaving water temperature',
  condenserWaterFlow: 'Condenser water flow',
  condenserPressureDrop: 'Condenser water pressure drop',
  designKwPerTon: 'Full-load efficiency',
  inputPower: 'Input power at design',
  voltage: 'Rated voltage',
  frequency: 'Rated frequency',
  fullLoadAmps: 'Full-load amps',
  oilPressureSetpoint: 'Oil pressure setpoint (differential)',
  chilledWaterSetpointMin: 'Lowest allowed leaving chilled-water setpoint',
  chilledWaterSetpointMax: 'Highest allowed leaving chilled-water setpoint',
  variableSpeedDrive: 'Variable-speed drive',
  pumpService: 'Service (chilled or condenser water)',
  pumpDesignFlow: 'Design flow',
  pumpDesignHead: 'Design head (total dynamic head)',
  motorRatedPower: 'Motor rated power',
  motorRatedSpeed: 'Rated speed',
}

/** One entry of a design-point form: its key, label, what it measures (null for a choice) and whether it is required. */
export interface DesignPointFormField {
  key: DesignPointFieldKey
  label: string
  quantity: QuantityKind | null
  required: boolean
}

// Form order per kind, with the schema's required flags (tests/shared/schemas.test.ts holds them to the schemas).
const FORM: Readonly<Record<EquipmentKind, ReadonlyArray<readonly [DesignPointFieldKey, boolean]>>> = {
  centrifugal_chiller: [
    ['refrigerant', true],
    ['capacity', true],
    ['evaporatorEnteringWaterTemp', true],
    ['evaporatorLeavingWaterTemp', true],
    ['evaporatorWaterFlow', true],
    ['evaporatorPressureDrop', false],
    ['condenserEnteringWaterTemp', true],
    ['condenserLeavingWaterTemp', true],
    ['condenserWaterFlow', true],
    ['condenserPressureDrop', false],
    ['designKwPerTon', false],
    ['inputPower', false],
    ['voltage', false],
    ['frequency', false],
    ['fullLoadAmps', false],
    ['oilPressureSetpoint', false],
    ['chilledWaterSetpointMin', false],
    ['chilledWaterSetpointMax', false],
    ['variableSpeedDrive', false],
  ],
  pump: [
    ['pumpService', false],
    ['pumpDesignFlow', true],
    ['pumpDesignHead', true],
    ['motorRatedPower', true],
    ['motorRatedSpeed', true],
    ['voltage', true],
    ['frequency', false],
    ['fullLoadAmps', true],
    ['variableSpeedDrive', false],
  ],
}

/** The design-point keys of one equipment kind, in form order. */
export function designPointKeysFor(kind: EquipmentKind): DesignPointFieldKey[] {
  return (FORM[kind] ?? []).map(([key]) => key)
}

/** The form of one equipment kind's design point: key, label, quantity kind and required flag, in order. */
export function designPointFormFor(kind: EquipmentKind): DesignPointFormField[] {
  return (FORM[kind] ?? []).map(([key, req]) => ({
    key,
    label: DESIGN_POINT_LABELS[key],
    quantity: isDesignPointKey(key) ? DESIGN_POINT_QUANTITIES[key] : null,
    required: req,
  }))
}
