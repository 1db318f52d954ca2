import { EngineeringError, requireFinite, requirePositive } from './errors'
import { KW_PER_TON } from './capacity'

/** Specific power in kW/ton: input kW ÷ capacity tons. Zero or negative capacity is refused. */
export function kwPerTon(inputKw: number, tons: number): number {
  const input = requireFinite(inputKw, 'input power')
  if (input < 0) throw new EngineeringError('NEGATIVE_VALUE', `Input power cannot be negative, got ${input}`, { inputKw })
  requirePositive(tons, 'capacity')
  return input / tons
}

/** Coefficient of performance (W/W) from kW/ton: 3.516 853 / (kW/ton) (definition + NIST SP 811). */
export function copFromKwPerTon(kwPerTonValue: number): number {
  return KW_PER_TON / requirePositive(kwPerTonValue, 'kW/ton')
}

/** kW/ton from COP: 3.516 853 / COP. */
export function kwPerTonFromCop(cop: number): number {
  return KW_PER_TON / requirePositive(cop, 'COP')
}

/** Energy efficiency ratio (Btu/W·h) from kW/ton: 12 / (kW/ton) (definition). */
export function eerFromKwPerTon(kwPerTonValue: number): number {
  return 12 / requirePositive(kwPerTonValue, 'kW/ton')
}

function checkLoad(loadPct: number): number {
  const load = requireFinite(loadPct, 'load')
  if (load <= 0 || load > 100) {
    throw new EngineeringError('OUT_OF_RANGE', `Load must be above 0 % and at most 100 %, got ${load} %`, { loadPct })
  }
  return load
}

/**
 * AHRI 550/590 (I-P) test tolerance on capacity and efficiency, percent: 10.5 − 0.07·%FL + 1500 / (ΔT_FL·%FL),
 * ΔT_FL the full-load evaporator water ΔT in °F.
 */
export function ahriTolerancePct(loadPct: number, fullLoadDeltaF: number): number {
  const load = checkLoad(loadPct)
  const deltaT = requirePositive(fullLoadDeltaF, 'full-load temperature difference')
  return 10.5 - 0.07 * load + 1500 / (deltaT * load)
}

/** AHRI 551/591 (SI) twin of ahriTolerancePct, percent: 10.5 − 0.07·%FL + 833 / (ΔT_FL·%FL), ΔT_FL in K. */
export function ahriTolerancePctSI(loadPct: number, fullLoadDeltaK: number): number {
  const load = checkLoad(loadPct)
  const deltaT = requirePositive(fullLoadDeltaK, 'full-load temperature difference')
  return 10.5 - 0.07 * load + 833 / (deltaT * load)
}

/** Measured deviation from design in percent: (measured − design) / design × 100. Design zero is refused. */
export function designDeviationPct(measured: number, design: number): number {
  const m = requireFinite(measured, 'measured value')
  const d = requireFinite(design, 'design value')
  if (d === 0) throw new EngineeringError('ZERO_DIVISOR', 'Design value must not be zero for a percent deviation', { measured, design })
  return ((m - d) / d) * 100
}
