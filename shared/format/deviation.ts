import { formatNumber, signedText } from '../units/format'
import { unitLabel, type QuantityKind } from '../units/quantities'

// A temperature's difference is worded in the difference unit of its scale: °F for °F, K for °C and K.
const DIFFERENCE_UNIT: Record<string, string> = { degF: 'deltaF', degC: 'K', K: 'K' }

/**
 * Measured minus design, as every screen and the report word it: in degrees for a temperature, in percent of design
 * otherwise; "+0.3 °F", "−1.3 %", and "0 %" when it rounds to nothing (never "−0"). Both values are in `unit`; null
 * when a percent of a zero design would mean nothing.
 */
export function deviationText(measured: number, design: number, kind: QuantityKind, unit: string): string | null {
  const signed = (value: number, suffix: string) => {
    const magnitude = formatNumber(Math.abs(value), 1)
    return signedText(magnitude === '0' ? 0 : value, `${magnitude} ${suffix}`)
  }
  if (kind === 'temperature') {
    const diffUnit = DIFFERENCE_UNIT[unit] ?? 'K'
    return signed(measured - design, unitLabel('temperature_difference', diffUnit))
  }
  if (design === 0) return null
  return signed(((measured - design) / Math.abs(design)) * 100, '%')
}
