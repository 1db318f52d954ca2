import { EngineeringError, requireFinite, requirePositive } from '../engineering/errors'
import {
  BAR_PA,
  BTU_IT_J,
  CELSIUS_ZERO_K,
  FAHRENHEIT_ZERO_R,
  FOOT_OF_WATER_PA,
  HORSEPOWER_W,
  INCH_M,
  INCH_OF_MERCURY_PA,
  INCH_OF_WATER_PA,
  MIL_M,
  PSI_PA,
  RANKINE_K,
  REVOLUTION_RAD,
  TON_OF_REFRIGERATION_W,
  US_GALLON_M3,
} from './factors'

export const QUANTITY_KINDS = [
  'temperature',
  'temperature_difference',
  'pressure_gauge',
  'pressure_absolute',
  'pressure_differential',
  'volumetric_flow',
  'power',
  'current',
  'voltage',
  'frequency',
  'time',
  'percent',
  'cooling_capacity',
  'specific_power',
  'efficiency',
  'rotational_speed',
  'vibration_velocity',
  'alignment_offset',
  'alignment_angularity',
] as const
export type QuantityKind = (typeof QUANTITY_KINDS)[number]

export const UNIT_SYSTEMS = ['IP', 'SI'] as const
export type UnitSystem = (typeof UNIT_SYSTEMS)[number]

export interface UnitSpec {
  /** Identifier stored with a reading; unique within its kind. */
  id: string
  kind: QuantityKind
  /** What a technician reads on screen and in messages. */
  label: string
  /** Decimal places shown for this unit in messages. */
  decimals: number
  /**
   * The unit in its kind's coherent SI unit (K, Pa, m³/s, W, rad/s, m, a plain ratio): SI = (value + offset) × factor.
   * The factors are in ./factors.ts with their sources.
   */
  factor: number
  /** Added before scaling, for the temperature scales whose zero is not absolute zero (°F, °C). */
  offset?: number
  /** -1 for a unit that counts downwards from its zero (inches of mercury vacuum). */
  sign?: -1
  /** The reciprocal of the kind's canonical unit (COP = 1 / (kW/kW)): a maximum in kW/ton is a minimum in it. */
  reciprocal?: true
}

interface KindSpec {
  label: string
  si: string
  ip: string
  /** Canonical SI storage unit. */
  canonical: string
  units: UnitSpec[]
}

function u(kind: QuantityKind, id: string, label: string, factor: number, decimals: number, extra: { offset?: number; sign?: -1 } = {}): UnitSpec {
  return { id, kind, label, factor, decimals, ...extra }
}

const KILO = 1000
const MILLI = 1e-3
const MINUTE_S = 60
const HOUR_S = 3600

// Gauge, absolute and differential pressure share psi and kPa: what separates them is the kind (the reference
// point), which a unit cannot express. Temperature differences are scale only (°F difference = °R = 5/9 K), so a
// 1 °F difference converts to 5/9 K, not to −17.2 °C.
const KINDS: Record<QuantityKind, KindSpec> = {
  temperature: {
    label: 'temperature', ip: 'degF', si: 'degC', canonical: 'K',
    units: [
      u('temperature', 'degF', '°F', RANKINE_K, 1, { offset: FAHRENHEIT_ZERO_R }),
      u('temperature', 'degC', '°C', 1, 1, { offset: CELSIUS_ZERO_K }),
      u('temperature', 'K', 'K', 1, 2),
    ],
  },
  temperature_difference: {
    label: 'temperature difference', ip: 'deltaF', si: 'K', canonical: 'K',
    units: [
      u('temperature_difference', 'deltaF', '°F', RANKINE_K, 1),
      u('temperature_difference', 'deltaC', '°C', 1, 2),
      u('temperature_difference', 'K', 'K', 1, 2),
    ],
  },
  pressure_gauge: {
    label: 'gauge pressure', ip: 'psig', si: 'kPag', canonical: 'Pag',
    units: [
      u('pressure_gauge', 'psig', 'psig', PSI_PA, 1),
      u('pressure_gauge', 'kPag', 'kPa (gauge)', KILO, 0),
      u('pressure_gauge', 'barg', 'bar (gauge)', BAR_PA, 2),
      u('pressure_gauge', 'Pag', 'Pa (gauge)', 1, 0),
      u('pressure_gauge', 'inHgVac', 'inHg vacuum', INCH_OF_MERCURY_PA, 1, { sign: -1 }),
    ],
  },
  pressure_absolute: {
    label: 'absolute pressure', ip: 'psia', si: 'kPaa', canonical: 'Paa',
    units: [
      u('pressure_absolute', 'psia', 'psia', PSI_PA, 2),
      u('pressure_absolute', 'kPaa', 'kPa (abs)', KILO, 1),
      u('pressure_absolute', 'bara', 'bar (abs)', BAR_PA, 3),
      u('pressure_absolute', 'Paa', 'Pa (abs)', 1, 0),
      u('pressure_absolute', 'inHgAbs', 'inHg (abs)', INCH_OF_MERCURY_PA, 2),
    ],
  },
  pressure_differential: {
    label: 'differential pressure', ip: 'psid', si: 'kPad', canonical: 'Pad',
    units: [
      u('pressure_differential', 'psid', 'psid', PSI_PA, 1),
      u('pressure_differential', 'kPad', 'kPa (diff)', KILO, 0),
      u('pressure_differential', 'Pad', 'Pa (diff)', 1, 0),
      u('pressure_differential', 'ftH2O', 'ft of water', FOOT_OF_WATER_PA, 1),
      u('pressure_differential', 'inH2O', 'in of water', INCH_OF_WATER_PA, 1),
    ],
  },
  volumetric_flow: {
    label: 'flow', ip: 'gpm', si: 'Lps', canonical: 'm3ps',
    units: [
      u('volumetric_flow', 'gpm', 'gpm', US_GALLON_M3 / MINUTE_S, 0),
      u('volumetric_flow', 'Lps', 'L/s', MILLI, 1),
      u('volumetric_flow', 'm3ph', 'm³/h', 1 / HOUR_S, 1),
      u('volumetric_flow', 'm3ps', 'm³/s', 1, 4),
    ],
  },
  power: {
    label: 'power', ip: 'kW', si: 'kW', canonical: 'W',
    units: [u('power', 'kW', 'kW', KILO, 1), u('power', 'W', 'W', 1, 0), u('power', 'hp', 'hp', HORSEPOWER_W, 1)],
  },
  current: { label: 'current', ip: 'A', si: 'A', canonical: 'A', units: [u('current', 'A', 'A', 1, 1)] },
  voltage: {
    label: 'voltage', ip: 'V', si: 'V', canonical: 'V',
    units: [u('voltage', 'V', 'V', 1, 0), u('voltage', 'kV', 'kV', KILO, 2)],
  },
  frequency: { label: 'frequency', ip: 'Hz', si: 'Hz', canonical: 'Hz', units: [u('frequency', 'Hz', 'Hz', 1, 1)] },
  time: {
    label: 'time', ip: 's', si: 's', canonical: 's',
    units: [u('time', 's', 's', 1, 1), u('time', 'min', 'min', MINUTE_S, 1), u('time', 'h', 'h', HOUR_S, 2)],
  },
  // Percent is stored as percent (75 for 75 %) so a reading reads the same in every system.
  percent: { label: 'percent', ip: '%', si: '%', canonical: '%', units: [u('percent', '%', '%', 1, 1)] },
  cooling_capacity: {
    label: 'cooling capacity', ip: 'TR', si: 'kW', canonical: 'W',
    units: [
      u('cooling_capacity', 'TR', 'tons', TON_OF_REFRIGERATION_W, 1),
      u('cooling_capacity', 'kW', 'kW', KILO, 1),
      u('cooling_capacity', 'W', 'W', 1, 0),
      u('cooling_capacity', 'BtuPerH', 'Btu/h', BTU_IT_J / HOUR_S, 0),
    ],
  },
  specific_power: {
    // SI readers state a chiller's efficiency as COP, cooling out over power in (kW/kW), the reciprocal of specific power.
    label: 'specific power', ip: 'kWPerTon', si: 'COP', canonical: 'kWPerKW',
    units: [
      u('specific_power', 'kWPerTon', 'kW/ton', KILO / TON_OF_REFRIGERATION_W, 3),
      u('specific_power', 'kWPerKW', 'kW/kW input per kW cooling', 1, 3),
      // Never scaled: convert() goes through kW/kW and takes the reciprocal.
      { id: 'COP', kind: 'specific_power', label: 'COP', factor: 1, decimals: 2, reciprocal: true },
    ],
  },
  efficiency: {
    // EER is Btu of cooling per watt-hour of input: 1 Btu/(W·h) = 1055.055 852 62 J / 3600 J = 0.293 071 W/W.
    label: 'efficiency', ip: 'COP', si: 'COP', canonical: 'COP',
    units: [u('efficiency', 'COP', 'COP', 1, 2), u('efficiency', 'EER', 'Btu/(W·h)', BTU_IT_J / HOUR_S, 2)],
  },
  // Shaft speed: 1 r/min = 2π/60 rad/s = 0.104 719 8 rad/s (NIST SP 811 (2008) App. B.8).
  rotational_speed: {
    label: 'rotational speed', ip: 'rpm', si: 'rpm', canonical: 'radps',
    units: [
      u('rotational_speed', 'rpm', 'rpm', REVOLUTION_RAD / MINUTE_S, 0),
      u('rotational_speed', 'rps', 'r/s', REVOLUTION_RAD, 2),
      u('rotational_speed', 'radps', 'rad/s', 1, 2),
    ],
  },
  // Vibration velocity (overall, RMS or peak as the field says): 1 in = 0.0254 m exactly (NIST SP 811 (2008) App. B.8).
  vibration_velocity: {
    label: 'vibration velocity', ip: 'inps', si: 'mmps', canonical: 'mps',
    units: [
      u('vibration_velocity', 'inps', 'in/s', INCH_M, 3),
      u('vibration_velocity', 'mmps', 'mm/s', MILLI, 2),
      u('vibration_velocity', 'mps', 'm/s', 1, 5),
    ],
  },
  // Shaft alignment offset, face gap and soft foot: 1 mil = 0.001 in = 0.0254 mm (NIST SP 811 (2008) App. B.8).
  alignment_offset: {
    label: 'alignment offset', ip: 'mil', si: 'mm', canonical: 'm',
    units: [
      u('alignment_offset', 'mil', 'mils', MIL_M, 1),
      u('alignment_offset', 'mm', 'mm', MILLI, 3),
      u('alignment_offset', 'in', 'in', INCH_M, 4),
      u('alignment_offset', 'm', 'm', 1, 6),
    ],
  },
  // Angular misalignment as a slope, a ratio of lengths: 1 mil/in = 1 mm/m; 1 mm/100 mm = 10 mm/m (NIST SP 811).
  alignment_angularity: {
    label: 'angular misalignment', ip: 'milPerIn', si: 'mmPer100mm', canonical: 'mmPerM',
    units: [
      u('alignment_angularity', 'milPerIn', 'mils/in', MIL_M / INCH_M, 2),
      u('alignment_angularity', 'mmPer100mm', 'mm/100 mm', 1 / 100, 3),
      u('alignment_angularity', 'mmPerM', 'mm/m', MILLI, 2),
    ],
  },
}

const UNIT_INDEX: Record<QuantityKind, Map<string, UnitSpec>> = Object.fromEntries(
  QUANTITY_KINDS.map((kind) => [kind, new Map(KINDS[kind].units.map((spec) => [spec.id, spec]))]),
) as Record<QuantityKind, Map<string, UnitSpec>>

/** True when `kind` names one of the quantity kinds. */
export function isQuantityKind(kind: unknown): kind is QuantityKind {
  return typeof kind === 'string' && (QUANTITY_KINDS as readonly string[]).includes(kind)
}

function kindSpec(kind: QuantityKind): KindSpec {
  if (!isQuantityKind(kind)) throw new EngineeringError('UNKNOWN_QUANTITY_KIND', `Unknown quantity kind "${String(kind)}"`, { kind })
  return KINDS[kind]
}

/** The units accepted for a quantity kind, I-P and SI, in display order. */
export function unitsOf(kind: QuantityKind): readonly UnitSpec[] {
  return kindSpec(kind).units
}

/** True when `unit` is an accepted unit id for `kind`. */
export function isUnitOf(kind: QuantityKind, unit: unknown): boolean {
  return isQuantityKind(kind) && typeof unit === 'string' && UNIT_INDEX[kind].has(unit)
}

/** The unit spec for `unit` in `kind`; throws UNIT_MISMATCH when the unit does not measure that kind. */
export function unitSpec(kind: QuantityKind, unit: string): UnitSpec {
  const spec = kindSpec(kind) && UNIT_INDEX[kind].get(unit)
  if (!spec) {
    const accepted = KINDS[kind].units.map((s) => s.id).join(', ')
    throw new EngineeringError('UNIT_MISMATCH', `"${unit}" is not a unit of ${KINDS[kind].label} (accepted: ${accepted})`, { kind, unit })
  }
  return spec
}

/** The canonical SI storage unit id for a kind (K, Pa, m³/s, W, …). */
export function canonicalUnit(kind: QuantityKind): string {
  return kindSpec(kind).canonical
}

/** The unit a project in `system` shows and enters for `kind`. */
export function displayUnit(kind: QuantityKind, system: UnitSystem): string {
  const spec = kindSpec(kind)
  return system === 'SI' ? spec.si : spec.ip
}

/** The on-screen label of a unit ("psid", "kPa (gauge)", "tons"). */
export function unitLabel(kind: QuantityKind, unit: string): string {
  return unitSpec(kind, unit).label
}

/** Plain-English name of a quantity kind ("differential pressure"). */
export function kindLabel(kind: QuantityKind): string {
  return kindSpec(kind).label
}

/** `value` in `from` converted to `to`, both units of `kind`, through the kind's coherent SI unit (./factors.ts). */
export function convert(value: number, from: string, to: string, kind: QuantityKind): number {
  requireFinite(value, 'value')
  const source = unitSpec(kind, from)
  const target = unitSpec(kind, to)
  if (source.id === target.id) return value
  if (source.reciprocal || target.reciprocal) {
    const canonical = canonicalUnit(kind)
    const inCanonical = source.reciprocal ? 1 / requirePositive(value, source.label) : convert(value, from, canonical, kind)
    return target.reciprocal ? 1 / requirePositive(inCanonical, unitSpec(kind, canonical).label) : convert(inCanonical, canonical, to, kind)
  }
  const signed = value * (source.sign ?? 1)
  let result: number
  if (source.factor === target.factor && (source.offset ?? 0) === (target.offset ?? 0)) result = signed
  else result = ((signed + (source.offset ?? 0)) * source.factor) / target.factor - (target.offset ?? 0)
  return result * (target.sign ?? 1)
}

/** True when `unit` is the reciprocal of its kind's canonical unit (COP): limits swap sides when shown in it. */
export function isReciprocalUnit(kind: QuantityKind, unit: string): boolean {
  return unitSpec(kind, unit).reciprocal === true
}

/** A difference (tolerance, band, offset) of `value` in `from` converted to `to`: scale only, no offset. */
export function convertDifference(value: number, from: string, to: string, kind: QuantityKind): number {
  requireFinite(value, 'value')
  if (isReciprocalUnit(kind, from) || isReciprocalUnit(kind, to)) throw new EngineeringError('UNIT_MISMATCH', `A difference cannot be converted between ${unitLabel(kind, from)} and ${unitLabel(kind, to)}`, { kind, from, to })
  return convert(value, from, to, kind) - convert(0, from, to, kind)
}

/** `value` in `unit` converted to the canonical SI storage unit of `kind`. */
export function toCanonical(value: number, unit: string, kind: QuantityKind): number {
  return convert(value, unit, canonicalUnit(kind), kind)
}

/** A canonical SI value of `kind` converted to `unit`. */
export function fromCanonical(value: number, unit: string, kind: QuantityKind): number {
  return convert(value, canonicalUnit(kind), unit, kind)
}

/** Standard atmosphere, 101 325 Pa = 14.696 psia (NIST SP 811 (2008) App. B.8); the zero of gauge pressure. */
export const STANDARD_ATMOSPHERE_PA = 101325

/** Gauge pressure in `gaugeUnit` as absolute pressure in `absoluteUnit`, referred to the site's atmosphere (standard by default). */
export function gaugeToAbsolute(value: number, gaugeUnit: string, absoluteUnit: string, atmospherePa = STANDARD_ATMOSPHERE_PA): number {
  const pa = toCanonical(value, gaugeUnit, 'pressure_gauge') + atmospherePa
  return fromCanonical(pa, absoluteUnit, 'pressure_absolute')
}

/** Absolute pressure in `absoluteUnit` as gauge pressure in `gaugeUnit` (negative below atmospheric). */
export function absoluteToGauge(value: number, absoluteUnit: string, gaugeUnit: string, atmospherePa = STANDARD_ATMOSPHERE_PA): number {
  const pa = toCanonical(value, absoluteUnit, 'pressure_absolute') - atmospherePa
  return fromCanonical(pa, gaugeUnit, 'pressure_gauge')
}

/** A number with its unit, as entered or stored. */
export interface Quantity {
  value: number
  unit: string
}

/** `q` in canonical SI for `kind`, with a clear error when its unit does not measure that kind. */
export function quantityToCanonical(q: Quantity, kind: QuantityKind): number {
  return toCanonical(q.value, q.unit, kind)
}
