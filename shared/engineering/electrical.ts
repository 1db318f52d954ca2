import { EngineeringError, requireFinite } from './errors'

/** NEMA MG 1 percent unbalance of three phase voltages or currents: 100 × largest deviation from the average / average. */
export function unbalancePct(phases: readonly number[]): number {
  if (!Array.isArray(phases) || phases.length !== 3) {
    throw new EngineeringError('MISSING_PHASE', `Three phase readings are needed, got ${Array.isArray(phases) ? phases.length : 'none'}`, { phases })
  }
  const names = ['Phase A', 'Phase B', 'Phase C']
  for (let i = 0; i < 3; i++) {
    if (phases[i] === undefined || phases[i] === null) {
      throw new EngineeringError('MISSING_PHASE', `${names[i]} reading is missing`, { phase: i })
    }
    requireFinite(phases[i], names[i])
    if (phases[i] < 0) throw new EngineeringError('NEGATIVE_VALUE', `${names[i]} reading cannot be negative`, { phase: i })
  }
  const average = (phases[0] + phases[1] + phases[2]) / 3
  if (average === 0) throw new EngineeringError('ZERO_DIVISOR', 'All three phases read zero: unbalance is undefined', { phases })
  const largestDeviation = Math.max(...phases.map((p) => Math.abs(p - average)))
  return (100 * largestDeviation) / average
}

// NEMA MG 1 Fig. 14-1 derating curve, read from the published figure (±0.02) [from memory; REFERENCES.md §3].
const DERATING_CURVE: ReadonlyArray<readonly [number, number]> = [
  [0, 1.0],
  [1, 1.0],
  [2, 0.95],
  [3, 0.88],
  [4, 0.82],
  [5, 0.75],
]

/** NEMA MG 1 motor derating factor (0–1) for a voltage unbalance in percent, interpolated; above 5 % is refused. */
export function motorDerating(unbalance: number): number {
  const pct = requireFinite(unbalance, 'unbalance')
  if (pct < 0) throw new EngineeringError('NEGATIVE_VALUE', `Unbalance cannot be negative, got ${pct} %`, { unbalance })
  if (pct > 5) {
    throw new EngineeringError(
      'UNBALANCE_TOO_HIGH',
      `Voltage unbalance of ${pct.toFixed(2)} % is above 5 %: NEMA MG 1 does not recommend operating the motor at all`,
      { unbalance },
    )
  }
  for (let i = 1; i < DERATING_CURVE.length; i++) {
    const [x1, y1] = DERATING_CURVE[i]
    if (pct <= x1) {
      const [x0, y0] = DERATING_CURVE[i - 1]
      return y0 + ((y1 - y0) * (pct - x0)) / (x1 - x0)
    }
  }
  return DERATING_CURVE[DERATING_CURVE.length - 1][1]
}
