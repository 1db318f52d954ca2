export { EngineeringError, requireFinite, requireNonNegative, requirePositive } from './errors'
export type { EngineeringErrorCode, ErrorQuantity, ErrorRange } from './errors'
export {
  capacityTons,
  waterHeatTons,
  capacityKw,
  waterSideHeatKw,
  tonsToKw,
  kwToTons,
  heatBalancePct,
  KW_PER_TON,
  BTU_PER_HOUR_PER_TON,
} from './capacity'
export {
  kwPerTon,
  copFromKwPerTon,
  kwPerTonFromCop,
  eerFromKwPerTon,
  ahriTolerancePct,
  ahriTolerancePctSI,
  designDeviationPct,
} from './efficiency'
export { unbalancePct, motorDerating } from './electrical'
export {
  REFRIGERANTS,
  isRefrigerant,
  saturationTempF,
  saturationPressurePsig,
  saturationTempC,
  saturationPressureKpaAbs,
  evaporatorApproachF,
  condenserApproachF,
} from './refrigerant'
export type { Refrigerant, SaturationSide } from './refrigerant'
export { waterPropertiesIF97, waterAtAtmosphere } from './water'
export type { WaterProperties } from './water'
export { STANDARD_ATMOSPHERE_KPA, BAROMETRIC_RANGE_KPA, ELEVATION_RANGE_M, barometricFromElevationKpa, requireBarometricKpa, siteBarometric } from './atmosphere'
