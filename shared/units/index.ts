export {
  QUANTITY_KINDS,
  UNIT_SYSTEMS,
  STANDARD_ATMOSPHERE_PA,
  isQuantityKind,
  isUnitOf,
  unitsOf,
  unitSpec,
  unitLabel,
  kindLabel,
  canonicalUnit,
  displayUnit,
  convert,
  convertDifference,
  toCanonical,
  fromCanonical,
  gaugeToAbsolute,
  absoluteToGauge,
  isReciprocalUnit,
  quantityToCanonical,
} from './quantities'
export type { QuantityKind, UnitSystem, UnitSpec, Quantity } from './quantities'
export { formatNumber, formatQuantity, distinguishingDecimals, enteredDecimals, signedText } from './format'
