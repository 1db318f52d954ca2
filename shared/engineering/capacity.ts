import { requireFinite, requireNonNegative, requirePositive } from './errors'
import { waterAtAtmosphere } from './water'

/** Btu/h per ton of refrigeration (NIST SP 811 (2008) App. B.8: 1 ton = 12 000 Btu_IT/h). */
export const BTU_PER_HOUR_PER_TON = 12000
/** kW per ton of refrigeration: 12 000 × 1055.05585262 J / 3600 s (NIST SP 811 (2008) App. B.8). */
export const KW_PER_TON = (BTU_PER_HOUR_PER_TON * 1055.05585262) / 3600 / 1000

/** Water-side capacity in tons: 500 × gpm × (entering − leaving °F) / 12 000 (ASHRAE Fundamentals water-side rule). */
export function capacityTons(flowGpm: number, enteringF: number, leavingF: number): number {
  requireNonNegative(flowGpm, 'flow')
  const deltaF = requireFinite(enteringF, 'entering temperature') - requireFinite(leavingF, 'leaving temperature')
  return (500 * flowGpm * deltaF) / BTU_PER_HOUR_PER_TON
}

/** m³ per US gallon (NIST SP 811 (2008) App. B.8: 1 gal = 3.785 411 784 L). */
const M3_PER_GALLON = 3.785411784e-3

/**
 * Water-side heat in tons from gpm and °F with the density and specific heat of water at the mean water temperature
 * (IAPWS-IF97 at 1 atm; docs/REFERENCES.md §Water properties and water-side heat): V̇ · ρ · cp · ΔT. The "500 rule"
 * of capacityTons fixes ρ·cp at about 60 °F water; at chilled-water temperatures this is about 0.3 % higher.
 * Positive when `fromF` is warmer than `toF` (evaporator: entering, leaving; condenser: leaving, entering).
 */
export function waterHeatTons(flowGpm: number, fromF: number, toF: number): number {
  requireNonNegative(flowGpm, 'flow')
  const a = (requireFinite(fromF, 'entering temperature') - 32) / 1.8
  const b = (requireFinite(toF, 'leaving temperature') - 32) / 1.8
  return capacityKw((flowGpm * M3_PER_GALLON * 1000) / 60, a, b) / KW_PER_TON
}

/**
 * Water-side capacity in kW: V̇ × ρ × cp × (entering − leaving °C), with ρ and cp of water at 1 atm and the
 * mean temperature from IAPWS-IF97 (ρ at `meteredAtC` instead when the flow meter sits on one side).
 */
export function capacityKw(flowLps: number, enteringC: number, leavingC: number, meteredAtC?: number): number {
  requireNonNegative(flowLps, 'flow')
  requireFinite(enteringC, 'entering temperature')
  requireFinite(leavingC, 'leaving temperature')
  const mean = waterAtAtmosphere((enteringC + leavingC) / 2)
  const density = meteredAtC === undefined ? mean.density : waterAtAtmosphere(meteredAtC).density
  const massFlowKgPerS = (flowLps / 1000) * density
  return (massFlowKgPerS * mean.specificHeat * (enteringC - leavingC)) / 1000
}

/** Heat flow in kW from mass flow (kg/s), specific heat (kJ/kg·K) and temperature difference (K): ṁ·cp·ΔT. */
export function waterSideHeatKw(massFlowKgPerS: number, specificHeatKjPerKgK: number, deltaTK: number): number {
  requireNonNegative(massFlowKgPerS, 'mass flow')
  requirePositive(specificHeatKjPerKgK, 'specific heat')
  return massFlowKgPerS * specificHeatKjPerKgK * requireFinite(deltaTK, 'temperature difference')
}

/** Tons of refrigeration as kW (× 3.516 853; NIST SP 811). */
export function tonsToKw(tons: number): number {
  return requireFinite(tons, 'capacity') * KW_PER_TON
}

/** kW of cooling as tons of refrigeration (÷ 3.516 853; NIST SP 811). */
export function kwToTons(kw: number): number {
  return requireFinite(kw, 'capacity') / KW_PER_TON
}

/** AHRI 550/590 energy balance in percent, signed: 100 × ((Q_evap + W_input) − Q_cond) / Q_cond, all in kW. */
export function heatBalancePct(evaporatorKw: number, condenserKw: number, inputKw: number): number {
  requireNonNegative(evaporatorKw, 'evaporator heat')
  requirePositive(condenserKw, 'condenser heat')
  requireNonNegative(inputKw, 'input power')
  return (100 * (evaporatorKw + inputKw - condenserKw)) / condenserKw
}
