/** `recorded`: a value with no acceptance criterion, shown neutrally and never counted as a pass. */
export const VERDICTS = ['pass', 'marginal', 'fail', 'incomplete', 'recorded'] as const
export type Verdict = (typeof VERDICTS)[number]

/** Fail limits and the warning band inside them, all in one unit; any may be absent. */
export interface LimitSet {
  min?: number
  max?: number
  warnMin?: number
  warnMax?: number
}

export interface Classification {
  verdict: 'pass' | 'marginal' | 'fail'
  /** Which limit decided a marginal or failing verdict. */
  breached?: 'min' | 'max' | 'warnMin' | 'warnMax'
}

// Limits and values reach here through unit conversions; a value equal to its limit must not fail on the last bit.
function below(value: number, limit: number): boolean {
  return value < limit - 1e-9 * Math.max(Math.abs(limit), Math.abs(value), 1e-12)
}

/** pass, marginal (inside the limits but beyond a warning level) or fail (beyond a limit); limits are inclusive. */
export function classify(value: number, limits: LimitSet): Classification {
  if (limits.min !== undefined && below(value, limits.min)) return { verdict: 'fail', breached: 'min' }
  if (limits.max !== undefined && below(limits.max, value)) return { verdict: 'fail', breached: 'max' }
  if (limits.warnMin !== undefined && below(value, limits.warnMin)) return { verdict: 'marginal', breached: 'warnMin' }
  if (limits.warnMax !== undefined && below(limits.warnMax, value)) return { verdict: 'marginal', breached: 'warnMax' }
  return { verdict: 'pass' }
}

const SEVERITY: Record<Verdict, number> = { recorded: -1, pass: 0, marginal: 1, incomplete: 2, fail: 3 }

/** The most severe of several verdicts (fail > incomplete > marginal > pass > recorded); pass for none. */
export function worstVerdict(verdicts: Iterable<Verdict>): Verdict {
  let worst: Verdict = 'pass'
  for (const v of verdicts) if (SEVERITY[v] > SEVERITY[worst]) worst = v
  return worst
}
