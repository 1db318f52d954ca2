import { SATURATION_PRESSURE_KPA_ABS, SATURATION_TEMPERATURE_F } from '../data/refrigerant-saturation'
import { formatQuantity } from '../units/format'
import { absoluteToGauge, gaugeToAbsolute } from '../units/quantities'
import { EngineeringError, requireFinite, type ErrorQuantity, type ErrorRange } from './errors'

export const REFRIGERANTS = ['R-134a', 'R-513A', 'R-1233zd(E)'] as const
export type Refrigerant = (typeof REFRIGERANTS)[number]
/** Which saturation line of a zeotropic blend; pure refrigerants have one line and ignore it. */
export type SaturationSide = 'dew' | 'bubble'

/** True when a saturation table ships for `name`. */
export function isRefrigerant(name: unknown): name is Refrigerant {
  return typeof name === 'string' && (REFRIGERANTS as readonly string[]).includes(name)
}

interface Table {
  name: string
  inverseT: number[]
  lnP: number[]
}

const tables = new Map<string, Table>()

function table(refrigerant: string, side: SaturationSide): Table {
  if (!isRefrigerant(refrigerant)) {
    throw new EngineeringError('UNKNOWN_REFRIGERANT', `No saturation table for refrigerant "${String(refrigerant)}" (have: ${REFRIGERANTS.join(', ')})`, { refrigerant })
  }
  const key = refrigerant === 'R-513A' ? `R-513A ${side}` : refrigerant
  let t = tables.get(key)
  if (!t) {
    const pressures = SATURATION_PRESSURE_KPA_ABS[key as keyof typeof SATURATION_PRESSURE_KPA_ABS]
    // ln p is nearly linear in 1/T (Clausius–Clapeyron), so interpolating there is accurate between rows.
    t = {
      name: refrigerant === 'R-513A' ? `R-513A (${side})` : refrigerant,
      inverseT: SATURATION_TEMPERATURE_F.map((f) => 1 / ((f - 32) / 1.8 + 273.15)),
      lnP: pressures.map((p) => Math.log(p)),
    }
    tables.set(key, t)
  }
  return t
}

function interpolate(xs: readonly number[], ys: readonly number[], x: number): number {
  const ascending = xs[xs.length - 1] > xs[0]
  let lo = 0
  let hi = xs.length - 1
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1
    if (ascending ? xs[mid] <= x : xs[mid] >= x) lo = mid
    else hi = mid
  }
  return ys[lo] + ((ys[hi] - ys[lo]) * (x - xs[lo])) / (xs[hi] - xs[lo])
}

const T_MIN_F = SATURATION_TEMPERATURE_F[0]
const T_MAX_F = SATURATION_TEMPERATURE_F[SATURATION_TEMPERATURE_F.length - 1]
const TABLE_TEMPERATURES: ErrorRange = { kind: 'temperature', min: T_MIN_F, max: T_MAX_F, unit: 'degF' }

const between = (r: ErrorRange) => `${formatQuantity(r.min, r.unit, r.kind)} to ${formatQuantity(r.max, r.unit, r.kind)}`

/**
 * OUTSIDE_TABLE with the reading and the table's coverage as quantities (`reading`, `covers`, `coversAlso`), so a caller
 * can say it again in a project's own units (shared/rules/problem-units.ts); the message itself is in the units given.
 */
function outsideTable(t: Table, reading: ErrorQuantity, covers: ErrorRange, coversAlso: ErrorRange | null, extra: Record<string, unknown>): EngineeringError {
  const subject = `the ${t.name} saturation table`
  const message = `${formatQuantity(reading.value, reading.unit, reading.kind)} is outside ${subject} (${between(covers)}${coversAlso ? `, ${between(coversAlso)}` : ''})`
  return new EngineeringError('OUTSIDE_TABLE', message, { ...extra, subject, reading, covers, ...(coversAlso ? { coversAlso } : {}) })
}

/** Saturation pressure in kPa absolute at `tempC`, interpolated in the shipped table (shared/data). */
export function saturationPressureKpaAbs(refrigerant: string, tempC: number, side: SaturationSide = 'dew'): number {
  const t = table(refrigerant, side)
  const tempF = requireFinite(tempC, 'saturation temperature') * 1.8 + 32
  if (tempF < T_MIN_F - 1e-9 || tempF > T_MAX_F + 1e-9) throw outsideTable(t, { kind: 'temperature', value: tempF, unit: 'degF' }, TABLE_TEMPERATURES, null, { refrigerant, tempF })
  return Math.exp(interpolate(t.inverseT, t.lnP, 1 / (tempC + 273.15)))
}

/** Saturation temperature in °C at `pressureKpaAbs` kPa absolute, interpolated in the shipped table (shared/data). */
export function saturationTempC(refrigerant: string, pressureKpaAbs: number, side: SaturationSide = 'dew'): number {
  const t = table(refrigerant, side)
  const p = requireFinite(pressureKpaAbs, 'saturation pressure')
  const lnP = p > 0 ? Math.log(p) : -Infinity
  const lo = t.lnP[0]
  const hi = t.lnP[t.lnP.length - 1]
  if (!(lnP >= lo - 1e-12 && lnP <= hi + 1e-12)) {
    const covers: ErrorRange = { kind: 'pressure_absolute', min: Math.exp(lo), max: Math.exp(hi), unit: 'kPaa' }
    throw outsideTable(t, { kind: 'pressure_absolute', value: p, unit: 'kPaa' }, covers, TABLE_TEMPERATURES, { refrigerant, pressureKpaAbs })
  }
  return 1 / interpolate(t.lnP, t.inverseT, lnP) - 273.15
}

/**
 * Saturation temperature in °F at a gauge pressure in psig (negative for vacuum), the gauge read against the site's
 * atmosphere `atmosphereKpa` (the standard 101.325 kPa = 14.696 psia by default): at altitude a vacuum reading is a
 * lower absolute pressure and a colder saturation (docs/REFERENCES.md §Refrigerant saturation and site barometric pressure).
 */
export function saturationTempF(refrigerant: string, pressurePsig: number, side: SaturationSide = 'dew', atmosphereKpa = 101.325): number {
  const t = table(refrigerant, side)
  const atmospherePa = requireFinite(atmosphereKpa, 'barometric pressure') * 1000
  const kPaAbs = gaugeToAbsolute(requireFinite(pressurePsig, 'pressure'), 'psig', 'kPaa', atmospherePa)
  try {
    return saturationTempC(refrigerant, kPaAbs, side) * 1.8 + 32
  } catch (err) {
    // Said in gauge pressure, as it was given: "368 psig", not "2638.6 kPa (abs)".
    const covers = err instanceof EngineeringError && err.code === 'OUTSIDE_TABLE' ? (err.details?.covers as ErrorRange | undefined) : undefined
    if (!covers) throw err
    const gauge: ErrorRange = { kind: 'pressure_gauge', min: absoluteToGauge(covers.min, 'kPaa', 'psig', atmospherePa), max: absoluteToGauge(covers.max, 'kPaa', 'psig', atmospherePa), unit: 'psig' }
    throw outsideTable(t, { kind: 'pressure_gauge', value: pressurePsig, unit: 'psig' }, gauge, TABLE_TEMPERATURES, { refrigerant, pressurePsig })
  }
}

/** Saturation pressure in psig (negative below atmospheric) at `tempF` °F, against the site's atmosphere `atmosphereKpa`. */
export function saturationPressurePsig(refrigerant: string, tempF: number, side: SaturationSide = 'dew', atmosphereKpa = 101.325): number {
  const kPaAbs = saturationPressureKpaAbs(refrigerant, (requireFinite(tempF, 'temperature') - 32) / 1.8, side)
  return absoluteToGauge(kPaAbs, 'kPaa', 'psig', requireFinite(atmosphereKpa, 'barometric pressure') * 1000)
}

/** Evaporator approach in °F (or K from °C): leaving chilled water − saturated evaporator temperature. */
export function evaporatorApproachF(leavingChilledWaterF: number, saturatedEvaporatorF: number): number {
  return requireFinite(leavingChilledWaterF, 'leaving chilled-water temperature') - requireFinite(saturatedEvaporatorF, 'saturated evaporator temperature')
}

/** Condenser approach in °F (or K from °C): saturated condensing temperature − leaving condenser water. */
export function condenserApproachF(leavingCondenserWaterF: number, saturatedCondensingF: number): number {
  return requireFinite(saturatedCondensingF, 'saturated condensing temperature') - requireFinite(leavingCondenserWaterF, 'leaving condenser-water temperature')
}
