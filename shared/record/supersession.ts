// Types only: the Verify page reads these words without loading the counting rule's expression parser.
import type { CheckOutcome, RunCount } from './counting'

/**
 * Supersession by check, not by report (docs/REFERENCES.md §Record keeping: supersession by check). A later accepted
 * run of the same equipment with the same checklist (any version of that template: its lineage) supersedes an earlier
 * report only for the checks it performed again. A re-test that carries most checks over ("verified earlier") leaves
 * the earlier report the record for those checks, and every screen, Verify and the re-test's own cover say so.
 *
 * Everything here is pure and reads only what was signed: the check index of each report is computed from its signed
 * snapshot with the one counting rule (`countRunRecord`, then `checkIndexOf`) and kept with the report when it is issued.
 */

/** A check is performed in a run when it has a real outcome of its own: judged (not incomplete) or recorded. */
export const PERFORMED_OUTCOMES = ['pass', 'marginal', 'fail', 'recorded'] as const satisfies readonly CheckOutcome[]

export function isPerformed(outcome: CheckOutcome | null): boolean {
  return outcome !== null && (PERFORMED_OUTCOMES as readonly string[]).includes(outcome)
}

/** Below this share of its checks performed, a run is said plainly to perform "only" that many. */
export const FEW_PERFORMED_SHARE = 0.25

/** What supersession needs of one signed run: its checks, which it performed, and which it carried over from where. */
export interface CheckIndex {
  /** Every check of the run (the one counting rule). */
  checks: number
  /** Field ids of the checks it performed, in checklist order. */
  performed: string[]
  /** Checks carried over ("verified earlier"): field id → the report number the disposition names. */
  carried: Record<string, string>
  /**
   * Checks recorded as done by others (the manufacturer's engineer, say), their record named in this report: not
   * performed here, so they supersede nothing, but a later re-test that carries them over cites this report rightly.
   */
  byOthers: string[]
}

/** The check index of a counted run: `checkIndexOf(countRunRecord(snapshot))` for a signed snapshot. */
export function checkIndexOf(count: RunCount): CheckIndex {
  const performed: string[] = []
  const carried: Record<string, string> = {}
  const byOthers: string[] = []
  let safetyChecks = 0
  for (const r of count.results.values()) {
    // Pre-work safety items (permits, lockout) are answered afresh on every visit: they say nothing about the
    // machine, so they neither supersede nor are superseded.
    if (r.safety) {
      if (r.outcome !== null) safetyChecks += 1
      continue
    }
    if (isPerformed(r.outcome)) performed.push(r.fieldId)
    else if (r.outcome === 'by_others') byOthers.push(r.fieldId)
    else if (r.outcome === 'verified_earlier') {
      const cited = r.disposition?.reportNumber?.trim()
      if (cited) carried[r.fieldId] = cited
    }
  }
  return { checks: count.totals.checks - safetyChecks, performed, carried, byOthers }
}

/** An accepted report as supersession reads it. */
export interface IssuedChecks {
  reportNumber: string
  /** ISO instant of acceptance: what orders a lineage. */
  acceptedAt: string
  /** null: issued before checks were kept one by one and no signed snapshot to count them from (whole-report rule). */
  index: CheckIndex | null
}

/** Negative when `a` was accepted before `b`; report numbers (issued in order) break a tie. */
export function compareIssued(a: Pick<IssuedChecks, 'acceptedAt' | 'reportNumber'>, b: Pick<IssuedChecks, 'acceptedAt' | 'reportNumber'>): number {
  return Date.parse(a.acceptedAt) - Date.parse(b.acceptedAt) || (a.reportNumber < b.reportNumber ? -1 : a.reportNumber > b.reportNumber ? 1 : 0)
}

export type SupersessionState = 'current' | 'partly' | 'superseded'

/** The word of each state, as the archive, Verify and the report print it. */
export const SUPERSESSION_WORDS: Record<SupersessionState, string> = {
  current: 'Current',
  partly: 'Partly superseded',
  superseded: 'Superseded',
}

/** A later report that performed again some of an earlier report's checks. */
export interface SupersededIn {
  reportNumber: string
  acceptedAt: string
  /** How many of the earlier report's performed checks it performed again (null: not known one by one). */
  checks: number | null
}

export interface Supersession {
  state: SupersessionState
  /** Checks the report performed (null: not known one by one). */
  performed: number | null
  /** Of those, how many have a newer performed result in a later report. */
  retested: number | null
  /** The later reports that performed any of its checks again, oldest first. */
  by: SupersededIn[]
  /** "Partly superseded: 8 of 95 checks re-tested in SP-2025-000031". */
  words: string
}

/** "SP-1", "SP-1 and SP-2", "SP-1, SP-2 and SP-3". */
export function listWords(items: readonly string[]): string {
  if (items.length <= 1) return items[0] ?? ''
  return `${items.slice(0, -1).join(', ')} and ${items[items.length - 1]}`
}

const checksWord = (n: number) => `${n} check${n === 1 ? '' : 's'}`

function supersessionWords(s: Omit<Supersession, 'words'>): string {
  const where = listWords(s.by.map((b) => b.reportNumber))
  if (s.state === 'current') return SUPERSESSION_WORDS.current
  // Partly: at least one re-tested and one not, so both counts are at least 1 and "checks" is plural.
  if (s.state === 'partly') return `${SUPERSESSION_WORDS.partly}: ${s.retested} of ${s.performed} checks re-tested in ${where}`
  if (s.performed === null) return `${SUPERSESSION_WORDS.superseded} by ${where}`
  if (s.performed === 0) return `${SUPERSESSION_WORDS.superseded}: it performed no check of its own; see ${where}`
  return `${SUPERSESSION_WORDS.superseded}: ${s.performed === 1 ? 'its one check' : `all ${s.performed} checks`} re-tested in ${where}`
}

/** The later reports of a lineage, oldest first. */
function laterThan(report: IssuedChecks, lineage: readonly IssuedChecks[]): IssuedChecks[] {
  return lineage.filter((o) => o.reportNumber !== report.reportNumber && compareIssued(o, report) > 0).sort(compareIssued)
}

/** Which of a report's performed checks have a newer performed result among `later` (every one, for an unindexed later report). */
function retestedIn(report: IssuedChecks & { index: CheckIndex }, later: readonly IssuedChecks[]): { retested: Set<string>; by: SupersededIn[] } {
  const own = new Set(report.index.performed)
  const retested = new Set<string>()
  const by: SupersededIn[] = []
  for (const l of later) {
    const again = l.index ? l.index.performed.filter((f) => own.has(f)) : [...own]
    if (!again.length) continue
    for (const f of again) retested.add(f)
    by.push({ reportNumber: l.reportNumber, acceptedAt: l.acceptedAt, checks: again.length })
  }
  return { retested, by }
}

/**
 * The state of an issued report among the reports of its lineage (the same equipment and checklist; the report itself
 * and earlier ones may be in the list, they are ignored): current while no later report performed any of its checks
 * again, partly superseded while some did, superseded once every check it performed has a newer performed result.
 */
export function supersessionOf(report: IssuedChecks, lineage: readonly IssuedChecks[]): Supersession {
  const later = laterThan(report, lineage)
  let s: Omit<Supersession, 'words'>
  if (!report.index) {
    // Not known one by one: any later report that performed something supersedes it as a whole (the rule before).
    const by = later.filter((l) => !l.index || l.index.performed.length > 0).map((l) => ({ reportNumber: l.reportNumber, acceptedAt: l.acceptedAt, checks: null }))
    s = { state: by.length ? 'superseded' : 'current', performed: null, retested: null, by: by.slice(-1) }
  } else if (report.index.performed.length === 0) {
    // It performed nothing of its own: nothing of it stays current once a later report performed anything.
    const by = later.filter((l) => !l.index || l.index.performed.length > 0).map((l) => ({ reportNumber: l.reportNumber, acceptedAt: l.acceptedAt, checks: 0 }))
    s = { state: by.length ? 'superseded' : 'current', performed: 0, retested: 0, by }
  } else {
    const { retested, by } = retestedIn(report as IssuedChecks & { index: CheckIndex }, later)
    const performed = report.index.performed.length
    s = { state: retested.size === 0 ? 'current' : retested.size === performed ? 'superseded' : 'partly', performed, retested: retested.size, by }
  }
  return { ...s, words: supersessionWords(s) }
}

/** Where a carried-over check was actually performed, following a chain of re-tests that carried it over in turn. */
export interface CarriedOrigin {
  fieldId: string
  /** The report the disposition names. */
  cited: string
  /** The report where the check was performed (the end of the chain), or null when the chain leads nowhere. */
  origin: string | null
  /** Every report from the cited one to where the chain stops, in order. */
  chain: string[]
  /** The origin holds the check as done by others (its record named there), not performed by its own technician. */
  byOthers: boolean
  /**
   * `not_in_lineage`: the cited (or a further) report is no issued report of this equipment with this checklist here
   * (another firm's record, or a typo): the origin is taken as cited. `not_performed`: a report of the chain neither
   * performed the check, nor recorded it as done by others, nor carried it over (it was not applicable, deferred or not
   * done there). `circular`: the chain comes back on itself.
   */
  problem: 'not_in_lineage' | 'not_performed' | 'circular' | null
}

function byNumberOf(lineage: readonly IssuedChecks[] | ReadonlyMap<string, IssuedChecks>): ReadonlyMap<string, IssuedChecks> {
  return lineage instanceof Map ? lineage : new Map((lineage as readonly IssuedChecks[]).map((r) => [r.reportNumber, r]))
}

export function originOf(fieldId: string, cited: string, lineage: readonly IssuedChecks[] | ReadonlyMap<string, IssuedChecks>): CarriedOrigin {
  const byNumber = byNumberOf(lineage)
  const chain = [cited]
  let at = cited
  for (;;) {
    const report = byNumber.get(at)
    if (!report) return { fieldId, cited, origin: at, chain, byOthers: false, problem: 'not_in_lineage' }
    if (!report.index || report.index.performed.includes(fieldId)) return { fieldId, cited, origin: at, chain, byOthers: false, problem: null }
    if (report.index.byOthers?.includes(fieldId)) return { fieldId, cited, origin: at, chain, byOthers: true, problem: null }
    const next = report.index.carried[fieldId]
    if (!next) return { fieldId, cited, origin: null, chain, byOthers: false, problem: 'not_performed' }
    if (chain.includes(next)) return { fieldId, cited, origin: null, chain: [...chain, next], byOthers: false, problem: 'circular' }
    chain.push(next)
    at = next
  }
}

/** A run's carried-over checks grouped by the report where they were performed (or by the problem of their citation). */
export interface CarriedFrom {
  /** The origin; for a chain that leads nowhere, the report cited. */
  reportNumber: string
  checks: number
  /** The reports the dispositions named, when not the origin itself (the carried-over chain: "cited as SP-…"). */
  citedAs: string[]
  /** The origin recorded these checks as done by others. */
  byOthers: boolean
  problem: CarriedOrigin['problem']
}

export function carriedFromOf(index: CheckIndex, lineage: readonly IssuedChecks[] | ReadonlyMap<string, IssuedChecks>): CarriedFrom[] {
  const byNumber = byNumberOf(lineage)
  const groups = new Map<string, CarriedFrom>()
  for (const [fieldId, cited] of Object.entries(index.carried)) {
    const o = originOf(fieldId, cited, byNumber)
    const reportNumber = o.origin ?? o.cited
    const key = `${reportNumber}\u0000${o.problem ?? ''}\u0000${o.byOthers}`
    let g = groups.get(key)
    if (!g) groups.set(key, (g = { reportNumber, checks: 0, citedAs: [], byOthers: o.byOthers, problem: o.problem }))
    g.checks += 1
    if (o.cited !== reportNumber && !g.citedAs.includes(o.cited)) g.citedAs.push(o.cited)
  }
  return [...groups.values()].sort((a, b) => {
    const ra = byNumber.get(a.reportNumber)
    const rb = byNumber.get(b.reportNumber)
    if (ra && rb) return compareIssued(ra, rb)
    return ra ? -1 : rb ? 1 : a.reportNumber < b.reportNumber ? -1 : 1
  })
}

/** One line per group: "87 checks carried over from SP-2024-000007 (cited as SP-2025-000031)". */
export function carriedWords(carried: readonly CarriedFrom[]): string[] {
  return carried.map((c) => {
    const n = checksWord(c.checks)
    const they = c.checks === 1 ? 'it was' : 'they were'
    if (c.problem === 'not_in_lineage') return `${n} carried over from ${c.reportNumber}, which is not an issued report of this equipment with this checklist here.`
    if (c.problem === 'not_performed') return `${n} cite${c.checks === 1 ? 's' : ''} ${c.reportNumber}, where ${they} not performed.`
    if (c.problem === 'circular') return `${n} cite${c.checks === 1 ? 's' : ''} ${c.reportNumber}, whose carried-over chain never reaches a report that performed ${c.checks === 1 ? 'it' : 'them'}.`
    const chain = c.citedAs.length ? ` (cited as ${listWords(c.citedAs)}, which carried ${c.checks === 1 ? 'it' : 'them'} over in turn)` : ''
    return `${n} carried over from ${c.reportNumber}${chain}${c.byOthers ? `, where ${they} recorded as done by others` : ''}.`
  })
}

/** What a report (or a run about to be accepted) carries over, in one line for the archive and Verify; null when nothing. */
export function retestWords(index: CheckIndex, carried: readonly CarriedFrom[]): string | null {
  if (!carried.length) return null
  const performed = index.performed.length
  return `Re-test: performed ${performed} of its ${index.checks} checks. ${carriedWords(carried).join(' ')}`
}

/** An earlier report whose checks accepting a run supersedes. */
export interface SupersedesEntry {
  reportNumber: string
  acceptedAt: string
  /** Its checks still current before this run (null: not known one by one). */
  current: number | null
  /** Checks it performed (null: not known one by one). */
  performed: number | null
  /** Of its current checks, how many this run performs again (null: not known one by one, it is superseded whole). */
  superseded: number | null
}

/** What accepting a run supersedes, and what it carries over from where: shown before each signature, frozen on the report. */
export interface RunSupersedes {
  checks: number
  performed: number
  /** It performs fewer than a quarter of its checks (or none): said plainly. */
  fewPerformed: boolean
  /** Earlier accepted reports of the lineage. */
  earlier: number
  supersedes: SupersedesEntry[]
  carried: CarriedFrom[]
  /** The words, one sentence per line. */
  lines: string[]
}

export type SupersedesVoice = 'preview' | 'report'

/**
 * What a run supersedes among the earlier accepted reports of its lineage (every report in `earlier` is taken to be
 * accepted before it): for each, how many of its checks still current this run performs again. `preview` words are
 * for the signers ("Accepting this run supersedes …"), `report` words for the re-test's cover ("This report …").
 */
export function runSupersedes(run: CheckIndex, earlier: readonly IssuedChecks[], voice: SupersedesVoice = 'preview'): RunSupersedes {
  const sorted = [...earlier].sort(compareIssued)
  const performed = new Set(run.performed)
  const supersedes: SupersedesEntry[] = []
  let withCurrent = 0
  for (const e of sorted) {
    if (!e.index) {
      if (performed.size) supersedes.push({ reportNumber: e.reportNumber, acceptedAt: e.acceptedAt, current: null, performed: null, superseded: null })
      continue
    }
    const { retested } = retestedIn(e as IssuedChecks & { index: CheckIndex }, laterThan(e, sorted))
    const current = e.index.performed.filter((f) => !retested.has(f))
    if (current.length) withCurrent += 1
    const again = current.filter((f) => performed.has(f)).length
    if (again) supersedes.push({ reportNumber: e.reportNumber, acceptedAt: e.acceptedAt, current: current.length, performed: e.index.performed.length, superseded: again })
  }
  const carried = carriedFromOf(run, sorted)
  const fewPerformed = run.checks > 0 && run.performed.length < run.checks * FEW_PERFORMED_SHARE
  const result = { checks: run.checks, performed: run.performed.length, fewPerformed, earlier: sorted.length, supersedes, carried }
  return { ...result, lines: supersedesLines(result, withCurrent, voice) }
}

function supersedesLines(r: Omit<RunSupersedes, 'lines'>, earlierWithCurrent: number, voice: SupersedesVoice): string[] {
  if (!r.earlier && !r.carried.length) return []
  const subject = voice === 'preview' ? 'This run' : 'This report'
  const lead = voice === 'preview' ? 'Accepting this run supersedes' : 'This report supersedes'
  const lines: string[] = []
  if (r.checks > 0) {
    const rest = r.checks - r.performed
    if (r.performed === 0) lines.push(`${subject} performs none of its ${checksWord(r.checks)}: every one is carried over or set aside, so it supersedes no check of an earlier report.`)
    else lines.push(`${subject} performs ${r.fewPerformed ? 'only ' : ''}${r.performed} of its ${checksWord(r.checks)}${rest ? `; the other ${rest} ${rest === 1 ? 'is' : 'are'} carried over or set aside` : ''}.`)
  }
  for (const s of r.supersedes) {
    if (s.superseded === null || s.current === null) {
      lines.push(`${lead} ${s.reportNumber} as a whole (its checks are not on record one by one).`)
      continue
    }
    const of = s.current === s.performed ? `of ${s.reportNumber}` : `still current in ${s.reportNumber}`
    const what = s.current === s.performed ? `${s.superseded} of ${s.current} checks` : `${s.superseded} of the ${s.current} checks`
    if (s.superseded === s.current) lines.push(`${lead} ${s.current === 1 ? `the one check ${of}` : `all ${s.current} checks ${of}`}: none stays current there.`)
    else lines.push(`${lead} ${what} ${of}; the other ${s.current - s.superseded} stay${s.current - s.superseded === 1 ? 's' : ''} current there.`)
  }
  if (r.performed > 0 && !r.supersedes.length && earlierWithCurrent > 0) lines.push(`${lead} no check of an earlier report: ${earlierWithCurrent === 1 ? 'the earlier report stays' : 'the earlier reports stay'} current.`)
  lines.push(...carriedWords(r.carried))
  return lines
}

/** The words on the re-test's cover (null for a first report that carries nothing over), frozen at acceptance. */
export function supersedesWords(r: RunSupersedes): string | null {
  return r.lines.length ? r.lines.join(' ') : null
}

/** A report's supersession as the archive and Verify answer it. */
export interface ReportSupersession {
  state: SupersessionState
  /** "Partly superseded: 8 of 95 checks re-tested in SP-2025-000031". */
  words: string
  by: { reportNumber: string; checks: number | null }[]
  performed: number | null
  retested: number | null
  /** For a re-test, what it carries over and from where ("Re-test: performed 8 of its 95 checks. 87 checks carried over from …"). */
  retest: string | null
}

export function reportSupersession(report: IssuedChecks, lineage: readonly IssuedChecks[]): ReportSupersession {
  const s = supersessionOf(report, lineage)
  const retest = report.index ? retestWords(report.index, carriedFromOf(report.index, lineage)) : null
  return { state: s.state, words: s.words, by: s.by.map((b) => ({ reportNumber: b.reportNumber, checks: b.checks })), performed: s.performed, retested: s.retested, retest }
}
