import { requireFinite } from '../engineering/errors'
import { unitSpec, type QuantityKind } from './quantities'

/** `value` rounded to `decimals` places, trailing zeros dropped ("18", "0.576", "-3.5"). */
export function formatNumber(value: number, decimals: number): string {
  requireFinite(value, 'value')
  const text = value.toFixed(Math.max(0, Math.min(decimals, 10)))
  const trimmed = text.includes('.') ? text.replace(/0+$/, '').replace(/\.$/, '') : text
  return trimmed === '-0' ? '0' : trimmed
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
