import { describe, expect, it } from 'vitest'
import {
  carriedFromOf,
  checkIndexOf,
  countRunRecord,
  normalizeDisposition,
  originOf,
  reportSupersession,
  runSupersedes,
  supersedesWords,
  supersessionOf,
  type CheckIndex,
  type Disposition,
  type IssuedChecks,
} from '@shared/record'
import type { ChecklistDefinition, ChecklistField } from '@shared/schemas/checklist'

// Supersession by check (docs/REFERENCES.md §Record keeping: supersession by check): a later run supersedes an earlier
// report only for the checks it performed again; carried-over checks stay on the report where they were performed.

const number = (id: string): ChecklistField => ({ id, label: `Reading ${id}`, kind: 'number', quantity: 'voltage', unit: 'V', required: true, rule: { type: 'range', min: 440, max: 500 } })
const ids = (prefix: string, n: number) => Array.from({ length: n }, (_, i) => `${prefix}${i + 1}`)

// 95 checks: the 8 running checks a re-test repeats, and 87 in three steps it may carry over.
const STEPS: Record<string, string[]> = { running: ids('run', 8), electrical: ids('el', 29), mechanical: ids('me', 29), controls: ids('co', 29) }
const definition: ChecklistDefinition = {
  title: 'Supersession test',
  unitSystem: 'IP',
  sections: [
    {
      id: 'all',
      title: 'All',
      steps: [
        ...Object.entries(STEPS).map(([id, fields]) => ({ id, title: id, fields: fields.map(number) })),
        // An optional remark left blank: not a check.
        { id: 'extra', title: 'Extra', fields: [{ id: 'remark', label: 'Remark', kind: 'text' as const, required: false }] },
      ],
    },
  ],
}

const carried = (reportNumber: string): Disposition => normalizeDisposition({ kind: 'verified_earlier', reportNumber, reason: 'Unchanged since' })
const reading = (fieldId: string, verdict = 'pass') => ({ fieldId, evaluation: { verdict, display: verdict === 'incomplete' ? null : { value: 460, unit: 'V', text: '460 V' } }, disposition: null })

/** A signed run: the named fields read (pass unless said), the named steps carried over from a report. */
function record(opts: { read: string[]; verdicts?: Record<string, string>; carry?: Record<string, string>; carryFields?: Record<string, string> }) {
  const readings: Record<string, ReturnType<typeof reading> | { fieldId: string; evaluation: { verdict: string }; disposition: Disposition }> = {}
  for (const f of opts.read) readings[f] = reading(f, opts.verdicts?.[f])
  for (const [f, from] of Object.entries(opts.carryFields ?? {})) readings[f] = { fieldId: f, evaluation: { verdict: 'incomplete' }, disposition: carried(from) }
  const steps = Object.fromEntries(Object.entries(opts.carry ?? {}).map(([stepId, from]) => [stepId, { stepId, disposition: carried(from) }]))
  return checkIndexOf(countRunRecord({ definition, readings, steps }))
}

const B = 'SP-2024-000007'
const R1 = 'SP-2025-000031'
const R2 = 'SP-2025-000040'
const R3 = 'SP-2025-000052'
const issued = (reportNumber: string, acceptedAt: string, index: CheckIndex | null): IssuedChecks => ({ reportNumber, acceptedAt, index })

const baselineIndex = () => record({ read: Object.values(STEPS).flat() })
const retestIndex = () => record({ read: STEPS.running, carry: { electrical: B, mechanical: B, controls: B } })

describe('the check index of a signed run', () => {
  it('when a run has judged, recorded, incomplete, set-aside and blank checks, then only judged and recorded ones are performed', () => {
    const index = record({
      read: [...STEPS.running, 'el1', 'el2'],
      verdicts: { run1: 'marginal', run2: 'fail', run3: 'recorded', el2: 'incomplete' },
      carryFields: { el3: B },
    })
    expect(index.checks).toBe(95)
    // run1…run8 (marginal, fail and recorded count as performed) and el1; el2 is incomplete; the rest are missing.
    expect(index.performed).toEqual([...STEPS.running, 'el1'])
    expect(index.carried).toEqual({ el3: B })
  })

  it('when a whole step is carried over, then each of its checks names the report its disposition cites', () => {
    const index = retestIndex()
    expect(index.performed).toEqual(STEPS.running)
    expect(Object.keys(index.carried)).toHaveLength(87)
    expect(new Set(Object.values(index.carried))).toEqual(new Set([B]))
  })
})

describe('a baseline and its re-tests', () => {
  it('when a re-test performs 8 of the 95 checks, then the baseline is partly superseded, the re-test current, and the signers are told', () => {
    const b = issued(B, '2024-10-01T15:00:00Z', baselineIndex())
    const r1 = issued(R1, '2025-03-02T15:00:00Z', retestIndex())

    const before = runSupersedes(r1.index!, [b])
    expect(before).toMatchObject({ checks: 95, performed: 8, fewPerformed: true, earlier: 1, supersedes: [{ reportNumber: B, current: 95, performed: 95, superseded: 8 }] })
    expect(before.lines).toEqual([
      'This run performs only 8 of its 95 checks; the other 87 are carried over or set aside.',
      `Accepting this run supersedes 8 of 95 checks of ${B}; the other 87 stay current there.`,
      `87 checks carried over from ${B}.`,
    ])

    const lineage = [b, r1]
    expect(supersessionOf(b, lineage)).toEqual({ state: 'partly', performed: 95, retested: 8, by: [{ reportNumber: R1, acceptedAt: r1.acceptedAt, checks: 8 }], words: `Partly superseded: 8 of 95 checks re-tested in ${R1}` })
    expect(supersessionOf(r1, lineage)).toMatchObject({ state: 'current', performed: 8, retested: 0, by: [], words: 'Current' })
    expect(reportSupersession(r1, lineage).retest).toBe(`Re-test: performed 8 of its 95 checks. 87 checks carried over from ${B}.`)
    expect(reportSupersession(b, lineage).retest).toBeNull()
    // The re-test's cover, in the report's own voice.
    expect(supersedesWords(runSupersedes(r1.index!, [b], 'report'))).toBe(
      `This report performs only 8 of its 95 checks; the other 87 are carried over or set aside. This report supersedes 8 of 95 checks of ${B}; the other 87 stay current there. 87 checks carried over from ${B}.`,
    )
  })

  it('when a second re-test performs the other 87, then the baseline is superseded, naming both, and the first re-test stays current', () => {
    const b = issued(B, '2024-10-01T15:00:00Z', baselineIndex())
    const r1 = issued(R1, '2025-03-02T15:00:00Z', retestIndex())
    const r2 = issued(R2, '2025-04-11T15:00:00Z', record({ read: [...STEPS.electrical, ...STEPS.mechanical, ...STEPS.controls], carry: { running: R1 } }))

    const before = runSupersedes(r2.index!, [r1, b])
    expect(before.fewPerformed).toBe(false)
    expect(before.supersedes).toEqual([{ reportNumber: B, acceptedAt: b.acceptedAt, current: 87, performed: 95, superseded: 87 }])
    expect(before.lines).toEqual([
      'This run performs 87 of its 95 checks; the other 8 are carried over or set aside.',
      `Accepting this run supersedes all 87 checks still current in ${B}: none stays current there.`,
      `8 checks carried over from ${R1}.`,
    ])

    const lineage = [r2, b, r1]
    expect(supersessionOf(b, lineage)).toMatchObject({ state: 'superseded', performed: 95, retested: 95, words: `Superseded: all 95 checks re-tested in ${R1} and ${R2}` })
    expect(supersessionOf(b, lineage).by.map((x) => [x.reportNumber, x.checks])).toEqual([[R1, 8], [R2, 87]])
    expect(supersessionOf(r1, lineage).state).toBe('current')
    expect(supersessionOf(r2, lineage).state).toBe('current')
  })

  it('when a re-test carries over from a re-test that carried over in turn, then the chain cites the original report', () => {
    const b = issued(B, '2024-10-01T15:00:00Z', baselineIndex())
    const r1 = issued(R1, '2025-03-02T15:00:00Z', retestIndex())
    // A near-empty re-test: one check performed, everything else "verified earlier" in R1.
    const r3 = issued(R3, '2025-06-20T15:00:00Z', record({ read: ['el1'], carry: { running: R1, mechanical: R1, controls: R1 }, carryFields: Object.fromEntries(STEPS.electrical.slice(1).map((f) => [f, R1])) }))

    expect(originOf('run1', R1, [b, r1])).toEqual({ fieldId: 'run1', cited: R1, origin: R1, chain: [R1], byOthers: false, problem: null })
    expect(originOf('me1', R1, [b, r1])).toEqual({ fieldId: 'me1', cited: R1, origin: B, chain: [R1, B], byOthers: false, problem: null })
    expect(carriedFromOf(r3.index!, [b, r1])).toEqual([
      { reportNumber: B, checks: 86, citedAs: [R1], byOthers: false, problem: null },
      { reportNumber: R1, checks: 8, citedAs: [], byOthers: false, problem: null },
    ])

    const before = runSupersedes(r3.index!, [b, r1])
    expect(before.fewPerformed).toBe(true)
    expect(before.lines).toEqual([
      'This run performs only 1 of its 95 checks; the other 94 are carried over or set aside.',
      `Accepting this run supersedes 1 of the 87 checks still current in ${B}; the other 86 stay current there.`,
      `86 checks carried over from ${B} (cited as ${R1}, which carried them over in turn).`,
      `8 checks carried over from ${R1}.`,
    ])
    // After it, the baseline is partly superseded by both re-tests; Verify of the near-empty re-test says what it is.
    const lineage = [b, r1, r3]
    expect(supersessionOf(b, lineage).words).toBe(`Partly superseded: 9 of 95 checks re-tested in ${R1} and ${R3}`)
    expect(reportSupersession(r3, lineage)).toMatchObject({
      state: 'current',
      retest: `Re-test: performed 1 of its 95 checks. 86 checks carried over from ${B} (cited as ${R1}, which carried them over in turn). 8 checks carried over from ${R1}.`,
    })
  })

  it('when a run performs nothing of its own, then it says so and supersedes nothing', () => {
    const b = issued(B, '2024-10-01T15:00:00Z', baselineIndex())
    const empty = record({ read: [], carry: Object.fromEntries(Object.keys(STEPS).map((s) => [s, B])) })
    const before = runSupersedes(empty, [b])
    expect(before.supersedes).toEqual([])
    expect(before.lines).toEqual([
      'This run performs none of its 95 checks: every one is carried over or set aside, so it supersedes no check of an earlier report.',
      `95 checks carried over from ${B}.`,
    ])
    expect(supersessionOf(b, [b, issued(R1, '2025-03-02T15:00:00Z', empty)]).state).toBe('current')
  })

  it('when a first report carries nothing over, then there is nothing to say on its cover', () => {
    const first = runSupersedes(baselineIndex(), [], 'report')
    expect(first.lines).toEqual([])
    expect(supersedesWords(first)).toBeNull()
  })
})

describe('citations and older records', () => {
  it('when a citation names an unknown report, one that did not perform the check, or a circle, then each is named as such', () => {
    const b = issued(B, '2024-10-01T15:00:00Z', record({ read: STEPS.running, carry: { electrical: R1 } }))
    const r1 = issued(R1, '2025-03-02T15:00:00Z', record({ read: STEPS.running, carry: { electrical: B } }))
    expect(originOf('el1', 'MS-118', [b])).toMatchObject({ origin: 'MS-118', problem: 'not_in_lineage' })
    expect(originOf('me1', B, [b])).toMatchObject({ origin: null, chain: [B], problem: 'not_performed' })
    expect(originOf('el1', B, [b, r1])).toMatchObject({ origin: null, chain: [B, R1, B], problem: 'circular' })

    const run = record({ read: STEPS.running, carryFields: { el1: 'MS-118', me1: B, me2: B } })
    expect(runSupersedes(run, [b]).lines.slice(-2)).toEqual([
      `2 checks cite ${B}, where they were not performed.`,
      '1 check carried over from MS-118, which is not an issued report of this equipment with this checklist here.',
    ])
  })

  it('when a re-test carries over checks the cited report recorded as done by others, then that report is their record, not a broken citation', () => {
    // The baseline's first start was made by the manufacturer's engineer (their record named); the re-test carries it over.
    const byOthers = normalizeDisposition({ kind: 'by_others', by: 'Field engineer of the manufacturer', reference: 'FS-204', witnessed: true })
    const baseIndex = checkIndexOf(countRunRecord({ definition, readings: Object.fromEntries([...STEPS.electrical, ...STEPS.mechanical, ...STEPS.controls].map((f) => [f, reading(f)])), steps: { running: { stepId: 'running', disposition: byOthers } } }))
    expect(baseIndex.byOthers).toEqual(STEPS.running)
    expect(baseIndex.performed).toHaveLength(87)
    const b = issued(B, '2024-10-01T15:00:00Z', baseIndex)
    const run = record({ read: STEPS.electrical, carry: { running: B, mechanical: B, controls: B } })
    expect(originOf('run1', B, [b])).toMatchObject({ origin: B, byOthers: true, problem: null })
    expect(runSupersedes(run, [b]).lines).toEqual([
      'This run performs 29 of its 95 checks; the other 66 are carried over or set aside.',
      `Accepting this run supersedes 29 of 87 checks of ${B}; the other 58 stay current there.`,
      // In checklist order: the running checks come first.
      `8 checks carried over from ${B}, where they were recorded as done by others.`,
      `58 checks carried over from ${B}.`,
    ])
  })

  it('when a report was issued before its checks were kept one by one, then the whole-report rule applies to it', () => {
    const old = issued(B, '2024-10-01T15:00:00Z', null)
    const r1 = issued(R1, '2025-03-02T15:00:00Z', retestIndex())
    expect(supersessionOf(old, [old, r1])).toMatchObject({ state: 'superseded', performed: null, words: `Superseded by ${R1}` })
    expect(runSupersedes(r1.index!, [old]).lines[1]).toBe(`Accepting this run supersedes ${B} as a whole (its checks are not on record one by one).`)
    // An unindexed later report re-tests every check of the earlier one.
    const b = issued(B, '2024-10-01T15:00:00Z', baselineIndex())
    expect(supersessionOf(b, [b, issued(R1, '2025-03-02T15:00:00Z', null)])).toMatchObject({ state: 'superseded', retested: 95 })
  })

  it('when two reports were accepted at the same instant, then the report number orders them', () => {
    const at = '2025-03-02T15:00:00.000Z'
    const a = issued(R1, at, baselineIndex())
    const later = issued(R2, at, baselineIndex())
    expect(supersessionOf(a, [a, later]).state).toBe('superseded')
    expect(supersessionOf(later, [a, later]).state).toBe('current')
  })
})

describe('pre-work safety items belong to the visit, not to the machine', () => {
  const withSafety: ChecklistDefinition = {
    ...definition,
    sections: [{ ...definition.sections[0], steps: [{ id: 'safety', title: 'Before work starts', safety: true, fields: [{ id: 'permits', label: 'Permits agreed', kind: 'yes_no', required: true, rule: { type: 'yes_no', expected: true } }] }, ...definition.sections[0].steps] }],
  }
  const yes = { fieldId: 'permits', evaluation: { verdict: 'pass', answer: true, display: null }, disposition: null }
  it('a re-test that answers only the safety items supersedes nothing, and the baseline counts its 95 machine checks', () => {
    const base = checkIndexOf(countRunRecord({ definition: withSafety, readings: { permits: yes, ...Object.fromEntries(Object.values(STEPS).flat().map((f) => [f, reading(f)])) }, steps: {} }))
    expect(base.checks).toBe(95)
    expect(base.performed).not.toContain('permits')
    const carryAll = Object.fromEntries(Object.keys(STEPS).map((s) => [s, { stepId: s, disposition: carried(B) }]))
    const retest = checkIndexOf(countRunRecord({ definition: withSafety, readings: { permits: yes }, steps: carryAll }))
    expect(retest.performed).toEqual([])
    const state = supersessionOf(issued(B, '2024-05-01T12:00:00Z', base), [issued(R1, '2025-05-01T12:00:00Z', retest)])
    expect(state.state).toBe('current')
  })
})
