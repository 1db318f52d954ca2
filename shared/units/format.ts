import { requireFinite } from '../engineering/errors'
import { unitSpec, type QuantityKind } from './quantities'

/** The minus sign as the trade prints it (U+2212), never a hyphen. */
export const MINUS = '\u2212'

/**
 * `value` rounded to `decimals` places, trailing zeros dropped, with a true minus sign ("18", "0.576", "−3.5"); a value
 * that rounds to zero is "0", never "−0" (docs/REFERENCES.md §Units, conversions and printed digits).
 */
export function formatNumber(value: number, decimals: number): string {
  requireFinite(value, 'value')
  const text = value.toFixed(Math.max(0, Math.min(decimals, 10)))
  const trimmed = text.includes('.') ? text.replace(/0+$/, '').replace(/\.$/, '') : text
  if (/^-0(\.0*)?$/.test(trimmed) || trimmed === '-0') return '0'
  return trimmed.startsWith('-') ? `${MINUS}${trimmed.slice(1)}` : trimmed
}

/** A signed offset in words: "+5 %", "−10 %", and plain "0 %" for zero (never "−0 %"); `text` is the magnitude. */
export function signedText(value: number, text: string): string {
  return value > 0 ? `+${text}` : value < 0 ? `${MINUS}${text}` : text
}

/** The decimal places a typed number carries (12.59 → 2, 146.5 → 1, 36 → 0), at most 6. */
export function enteredDecimals(value: number): number {
  if (!Number.isFinite(value)) return 0
  const text = String(Math.abs(value))
  if (text.includes('e')) return 6
  const dot = text.indexOf('.')
  return dot < 0 ? 0 : Math.min(6, text.length - dot - 1)
}

/** "18 psid", "44.5 °F", "501.5 tons": the value in `unit` rounded to that unit's usual precision. */
export function formatQuantity(value: number, unit: string, kind: QuantityKind, extraDecimals = 0): string {
  const spec = unitSpec(kind, unit)
  return `${formatNumber(value, spec.decimals + extraDecimals)} ${spec.label}`
}

/**
 * The fewest extra decimals (up to 4) at which `value` and every `other` print differently, so a
 * message never says "25 psid is below the minimum 25 psid".
 */
export function distinguishingDecimals(value: number, others: readonly number[], baseDecimals: number): number {
  for (let extra = 0; extra <= 4; extra++) {
    const shown = formatNumber(value, baseDecimals + extra)
    if (others.every((o) => o === value || formatNumber(o, baseDecimals + extra) !== shown)) return extra
  }
  return 4
}
