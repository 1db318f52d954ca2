import { EngineeringError, requireFinite, requireNonNegative, requirePositive } from '../engineering/errors'
import { formatNumber } from '../units/format'
import { classify, type LimitSet } from './verdict'

/** Shape rule for a rising reading, in the series' own unit and seconds. */
export interface RampCriteria {
  setpoint: number
  reachWithinS: number
  reachNotBeforeS?: number
  holdS?: number
  floor?: number
  warnFloor?: number
}

export interface RampJudgement {
  verdict: 'pass' | 'marginal' | 'fail'
  /** Seconds from the start command (t = 0) until the reading first reached the setpoint; null if it never did. */
  timeToSetpointS: number | null
  /** Seconds the reading stayed at or above the setpoint without a break up to the drive start. */
  holdAchievedS: number
  /** The time the hold was measured up to: the drive start, or the last point when none was given. */
  holdMeasuredToS: number
  /** Lowest reading from the moment the setpoint was first reached to the end of the series; null if never reached. */
  minimumAfterSetpoint: number | null
  /** Highest reading in the series. */
  maximum: number
  /** Clauses explaining the verdict, in plain English ("reached the setpoint 35 psid in 8 s"). */
  findings: string[]
}

/** Checks that points are finite [seconds, value] pairs with strictly increasing, non-negative times. */
export function checkSeries(points: ReadonlyArray<readonly [number, number]>): void {
  if (!Array.isArray(points) || points.length < 2) {
    throw new EngineeringError('INVALID_SERIES', 'A time series needs at least two points', { count: Array.isArray(points) ? points.length : 0 })
  }
  points.forEach((p, i) => {
    if (!Array.isArray(p) || p.length !== 2) throw new EngineeringError('INVALID_SERIES', `Point ${i + 1} must be [seconds, value]`, { index: i })
    requireNonNegative(p[0], `time of point ${i + 1}`)
    requireFinite(p[1], `value of point ${i + 1}`)
    if (i > 0 && p[0] <= points[i - 1][0]) {
      throw new EngineeringError('INVALID_SERIES', `Times must increase: point ${i + 1} at ${p[0]} s is not after ${points[i - 1][0]} s`, { index: i })
    }
  })
}

function crossing(t0: number, v0: number, t1: number, v1: number, level: number): number {
  return v1 === v0 ? t0 : t0 + ((level - v0) * (t1 - t0)) / (v1 - v0)
}

const seconds = (s: number) => `${formatNumber(s, 1)} s`

/**
 * Judges a ramp such as oil pressure after the pump starts: time to setpoint, hold at or above it before the
 * drive start, and the minimum after first reaching it. Points are [seconds from the start command, value].
 */
export function judgeRamp(
  points: ReadonlyArray<readonly [number, number]>,
  rule: RampCriteria,
  options: { driveStartS?: number; format?: (value: number) => string } = {},
): RampJudgement {
  checkSeries(points)
  const setpoint = requireFinite(rule.setpoint, 'setpoint')
  const reachWithinS = requirePositive(rule.reachWithinS, 'reach-within time')
  const holdS = rule.holdS === undefined ? 0 : requireNonNegative(rule.holdS, 'hold time')
  const fmt = options.format ?? ((v: number) => formatNumber(v, 2))
  const last = points[points.length - 1][0]
  const driveStart = options.driveStartS === undefined ? last : Math.min(requireNonNegative(options.driveStartS, 'drive start'), last)

  let reachedAt: number | null = points[0][1] >= setpoint ? points[0][0] : null
  let aboveSince: number | null = reachedAt
  for (let i = 1; i < points.length; i++) {
    const [t0, v0] = points[i - 1]
    const [t1, v1] = points[i]
    if (v0 < setpoint && v1 >= setpoint) {
      const tc = crossing(t0, v0, t1, v1, setpoint)
      if (reachedAt === null) reachedAt = tc
      if (tc <= driveStart) aboveSince = tc
    } else if (v0 >= setpoint && v1 < setpoint) {
      if (crossing(t0, v0, t1, v1, setpoint) <= driveStart) aboveSince = null
    }
  }
  const valueAt = (t: number) => {
    for (let i = 1; i < points.length; i++) {
      const [t0, v0] = points[i - 1]
      const [t1, v1] = points[i]
      if (t <= t1) return t <= t0 ? v0 : v0 + ((v1 - v0) * (t - t0)) / (t1 - t0)
    }
    return points[points.length - 1][1]
  }
  const holding = aboveSince !== null && aboveSince <= driveStart && valueAt(driveStart) >= setpoint
  const holdAchievedS = holding ? driveStart - (aboveSince as number) : 0
  const minimumAfterSetpoint =
    reachedAt === null ? null : Math.min(setpoint, ...points.filter(([t]) => t >= (reachedAt as number)).map(([, v]) => v))
  const maximum = Math.max(...points.map(([, v]) => v))

  const findings: string[] = []
  let verdict: RampJudgement['verdict'] = 'pass'
  const fail = (text: string) => {
    verdict = 'fail'
    findings.push(text)
  }
  const until = options.driveStartS === undefined ? 'up to the last point' : 'before the drive started'
  if (reachedAt === null) {
    fail(`never reached the setpoint ${fmt(setpoint)} (highest ${fmt(maximum)})`)
  } else {
    if (reachedAt > reachWithinS) fail(`reached the setpoint ${fmt(setpoint)} after ${seconds(reachedAt)}, later than the ${seconds(reachWithinS)} allowed`)
    else if (rule.reachNotBeforeS !== undefined && reachedAt < rule.reachNotBeforeS) fail(`reached the setpoint ${fmt(setpoint)} after ${seconds(reachedAt)}, sooner than the ${seconds(rule.reachNotBeforeS)} minimum`)
    else findings.push(`reached the setpoint ${fmt(setpoint)} in ${seconds(reachedAt)}`)
    if (holdS > 0) {
      if (holdAchievedS < holdS - 1e-9) fail(`held at or above it for ${seconds(holdAchievedS)} ${until}, less than the ${seconds(holdS)} required`)
      else findings.push(`held it ${seconds(holdAchievedS)} ${until}`)
    }
    const floors: LimitSet = { min: rule.floor, warnMin: rule.warnFloor }
    const c = classify(minimumAfterSetpoint as number, floors)
    if (c.verdict === 'fail') fail(`fell to ${fmt(minimumAfterSetpoint as number)} after reaching the setpoint, below the floor ${fmt(rule.floor as number)}`)
    else if (c.verdict === 'marginal') {
      if (verdict === 'pass') verdict = 'marginal'
      const floorNote = rule.floor === undefined ? '' : ` (floor ${fmt(rule.floor)})`
      findings.push(`fell to ${fmt(minimumAfterSetpoint as number)} after reaching the setpoint, below the warning level ${fmt(rule.warnFloor as number)}${floorNote}`)
    } else if (rule.floor !== undefined || rule.warnFloor !== undefined) {
      findings.push(`never fell below ${fmt(minimumAfterSetpoint as number)} after reaching it`)
    }
  }
  return { verdict, timeToSetpointS: reachedAt, holdAchievedS, holdMeasuredToS: driveStart, minimumAfterSetpoint, maximum, findings }
}

export interface IntervalJudgement {
  verdict: 'pass' | 'marginal' | 'fail'
  durationS: number
  message: string
}

/**
 * Judges the time between two events (pre-lubrication start to drive start, start command to full speed) against a
 * window in seconds, with the same inclusive limits and warning band as a range rule.
 */
export function judgeInterval(startS: number, endS: number, window: LimitSet, what = 'Interval'): IntervalJudgement {
  requireNonNegative(startS, 'start time')
  requireNonNegative(endS, 'end time')
  if (endS < startS) throw new EngineeringError('INVALID_SERIES', `The end (${endS} s) comes before the start (${startS} s)`, { startS, endS })
  const durationS = endS - startS
  const c = classify(durationS, window)
  const d = seconds(durationS)
  const span = window.min !== undefined && window.max !== undefined ? `within ${formatNumber(window.min, 1)} to ${seconds(window.max)}` : ''
  let message: string
  if (c.breached === 'min') message = `${what} took ${d}, shorter than the minimum ${seconds(window.min as number)}`
  else if (c.breached === 'max') message = `${what} took ${d}, longer than the maximum ${seconds(window.max as number)}`
  else if (c.breached === 'warnMin') message = `${what} took ${d}, within limits but shorter than the warning level ${seconds(window.warnMin as number)}`
  else if (c.breached === 'warnMax') message = `${what} took ${d}, within limits but longer than the warning level ${seconds(window.warnMax as number)}`
  else message = `${what} took ${d}${span ? `, ${span}` : ''}`
  return { verdict: c.verdict, durationS, message }
}
