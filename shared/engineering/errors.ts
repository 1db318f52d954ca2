import type { QuantityKind } from '../units/quantities'

/** A number an error is about, with what it measures and its unit, so a caller can print it in its own units. */
export interface ErrorQuantity {
  kind: QuantityKind
  value: number
  unit: string
}

/** The values a calculation accepts, as quantities (a table's coverage). */
export interface ErrorRange {
  kind: QuantityKind
  min: number
  max: number
  unit: string
}

/** Why a calculation, conversion or rule refused its input. */
export type EngineeringErrorCode =
  | 'NON_FINITE'
  | 'NEGATIVE_VALUE'
  | 'ZERO_DIVISOR'
  | 'OUT_OF_RANGE'
  | 'OUTSIDE_TABLE'
  | 'UNKNOWN_UNIT'
  | 'UNIT_MISMATCH'
  | 'UNKNOWN_QUANTITY_KIND'
  | 'MISSING_PHASE'
  | 'UNBALANCE_TOO_HIGH'
  | 'UNKNOWN_REFRIGERANT'
  | 'INVALID_EXPRESSION'
  | 'INVALID_SERIES'
  | 'INVALID_ENTRY'
  | 'MISSING_DESIGN_VALUE'
  | 'MISSING_CONTEXT'

/** A typed refusal: engineering code never answers bad input with NaN or a silent zero. */
export class EngineeringError extends Error {
  readonly code: EngineeringErrorCode
  readonly details?: Record<string, unknown>

  constructor(code: EngineeringErrorCode, message: string, details?: Record<string, unknown>) {
    super(message)
    this.name = 'EngineeringError'
    this.code = code
    this.details = details
  }
}

/** Returns `value` when it is a finite number; throws NON_FINITE otherwise. */
export function requireFinite(value: unknown, name: string): number {
  if (typeof value !== 'number' || !Number.isFinite(value)) {
    throw new EngineeringError('NON_FINITE', `${name} must be a finite number, got ${String(value)}`, { name, value })
  }
  return value
}

/** Returns `value` when it is finite and not negative; throws otherwise. */
export function requireNonNegative(value: unknown, name: string): number {
  const v = requireFinite(value, name)
  if (v < 0) throw new EngineeringError('NEGATIVE_VALUE', `${name} cannot be negative, got ${v}`, { name, value: v })
  return v
}

/** Returns `value` when it is finite and greater than zero; throws ZERO_DIVISOR or NEGATIVE_VALUE otherwise. */
export function requirePositive(value: unknown, name: string): number {
  const v = requireFinite(value, name)
  if (v === 0) throw new EngineeringError('ZERO_DIVISOR', `${name} must be greater than zero`, { name, value: v })
  if (v < 0) throw new EngineeringError('NEGATIVE_VALUE', `${name} cannot be negative, got ${v}`, { name, value: v })
  return v
}
