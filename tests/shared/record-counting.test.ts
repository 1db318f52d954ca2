import { describe, expect, it } from 'vitest'
import { chillerStartupDefinition } from '@shared/library'
import {
  acceptanceWords,
  blockingFindings,
  byOthersOf,
  countRun,
  describeTotals,
  dispositionSchema,
  exceptionsOf,
  normalizeDisposition,
  performerStatement,
  safetyStop,
  type Disposition,
} from '@shared/record'
import type { ChecklistDefinition } from '@shared/schemas/checklist'

// The one counting rule (docs/REFERENCES.md §Record keeping: counts, dispositions and exceptions).
const def: ChecklistDefinition = {
  title: 'Counting test',
  unitSystem: 'IP',
  sections: [
    {
      id: 's1',
      title: 'First',
      steps: [
        {
          id: 'safety',
          title: 'Before work starts',
          safety: true,
          stop: 'Do not proceed until the permits are agreed.',
          fields: [{ id: 'permits', label: 'Permits agreed', kind: 'yes_no', required: true, rule: { type: 'yes_no', expected: true } }],
        },
        {
          id: 'readings',
          title: 'Readings',
          fields: [
            { id: 'a', label: 'Voltage A', kind: 'number', quantity: 'voltage', unit: 'V', required: true, rule: { type: 'range', min: 440, max: 500 } },
            { id: 'b', label: 'Voltage B', kind: 'number', quantity: 'voltage', unit: 'V', required: true, rule: { type: 'range', min: 440, max: 500, warnMax: 490 } },
            { id: 'kw', label: 'Input power', kind: 'number', quantity: 'power', unit: 'kW', required: true },
            { id: 'avg', label: 'Average', kind: 'number', quantity: 'voltage', unit: 'V', required: true, computed: { expression: '(a + b) / 2' }, rule: { type: 'range', min: 440 } },
            { id: 'remark', label: 'Remarks', kind: 'text', required: false },
            { id: 'optionalNumber', label: 'Optional reading', kind: 'number', quantity: 'voltage', unit: 'V', required: false, rule: { type: 'range', min: 0 } },
          ],
        },
        {
          id: 'start',
          title: 'First start',
          fields: [
            { id: 'ramp', label: 'Ramp time', kind: 'timer', quantity: 'time', unit: 's', required: true, rule: { type: 'range', max: 10 } },
            { id: 'startNote', label: 'Start note', kind: 'text', required: false },
          ],
        },
      ],
    },
  ],
}

const d = (kind: Disposition['kind'], extra: Partial<Disposition> = {}): Disposition => normalizeDisposition({ kind, reason: 'because', ...extra })
const r = (fieldId: string, verdict: string, extra: Record<string, unknown> = {}) => ({ fieldId, verdict, hasValue: verdict !== 'incomplete', ...extra })

describe('countRun: one rule for what is a check and how it counts', () => {
  it('when values have no acceptance criterion, then they are recorded and never counted as a pass; optional blanks are not checks', () => {
    const c = countRun(def, [r('permits', 'pass'), r('a', 'pass'), r('b', 'marginal'), r('kw', 'recorded'), r('avg', 'pass'), r('remark', 'incomplete', { hasValue: false }), r('optionalNumber', 'incomplete', { hasValue: false }), r('ramp', 'pass'), r('startNote', 'recorded')], [])
    expect(c.totals).toMatchObject({ checks: 7, judged: 5, pass: 4, marginal: 1, recorded: 2, incomplete: 0, required: 7, answered: 7 })
    expect(c.results.get('remark')?.outcome).toBeNull()
    expect(c.results.get('optionalNumber')?.outcome).toBeNull()
    expect(describeTotals(c.totals)).toBe('7 checks: 4 pass, 1 marginal, 2 recorded')
  })

  it('when an older record stored "pass" for a value without a criterion, then it still counts as recorded', () => {
    const c = countRun(def, [r('kw', 'pass')], [])
    expect(c.results.get('kw')?.outcome).toBe('recorded')
  })

  it('when a step is set aside, then its required fields count under the disposition and its optional ones are not checks', () => {
    const c = countRun(def, [r('ramp', 'incomplete', { hasValue: false })], [{ stepId: 'start', disposition: d('by_others', { by: 'Field service engineer', reference: 'FS-118', witnessed: true }) }])
    expect(c.results.get('ramp')).toMatchObject({ outcome: 'by_others', dispositionFrom: 'step' })
    expect(c.results.get('startNote')?.outcome).toBeNull()
    expect(c.totals.byOthers).toBe(1)
  })

  it('when a reading a computed value depends on is set aside, then the computed value carries its disposition, not "incomplete"', () => {
    const c = countRun(def, [r('a', 'incomplete', { disposition: d('not_done', { reason: 'Meter not available' }) }), r('b', 'pass'), r('avg', 'incomplete', { hasValue: false })], [])
    expect(c.results.get('avg')).toMatchObject({ outcome: 'not_done', dispositionFrom: 'input', dispositionInput: 'a' })
    expect(c.totals.notDone).toBe(2)
    expect(c.totals.incomplete).toBe(3) // permits, input power and ramp: still to be recorded
  })

  it('when an older record has only the not-applicable flag, then it counts as not applicable with its reason', () => {
    const c = countRun(def, [r('kw', 'incomplete', { notApplicable: true, naReason: 'No meter on this starter' })], [])
    expect(c.results.get('kw')).toMatchObject({ outcome: 'not_applicable', disposition: { kind: 'not_applicable', reason: 'No meter on this starter' } })
  })

  it('when a pre-work safety item is answered No, then the run stops with the step’s words and the item is not a fail to sign off', () => {
    const c = countRun(def, [r('permits', 'fail')], [])
    expect(c.results.get('permits')?.outcome).toBe('incomplete')
    expect(c.totals.fail).toBe(0)
    expect(safetyStop(def, { permits: { verdict: 'fail' } })).toEqual({ stepId: 'safety', message: 'Do not proceed until the permits are agreed.', fieldIds: ['permits'] })
    expect(safetyStop(def, { permits: { verdict: 'pass' } })).toBeNull()
  })
})

describe('dispositions: each kind asks for what makes it a record', () => {
  const invalid = async (value: unknown) => {
    try {
      await dispositionSchema.validate(value, { abortEarly: true })
      return null
    } catch (err) {
      return { path: (err as { path?: string }).path, message: (err as Error).message }
    }
  }
  it.each([
    [{ kind: 'not_applicable' }, 'reason'],
    [{ kind: 'by_others', by: 'Field service engineer' }, 'reference'],
    [{ kind: 'by_others', by: 'Field service engineer', reference: 'FS-118' }, 'witnessed'],
    [{ kind: 'verified_earlier' }, 'reportNumber'],
    [{ kind: 'deferred', reason: 'Seasonal load' }, 'dueDate'],
    [{ kind: 'deferred', reason: 'Seasonal load', dueDate: '2027-02-30' }, 'dueDate'],
    [{ kind: 'not_done' }, 'reason'],
    [{ kind: 'skipped', reason: 'x' }, 'kind'],
  ])('when %j is given, then it is refused naming %s', async (value, path) => {
    expect((await invalid(value))?.path).toBe(path)
  })
  it('when complete, then it is accepted and normalised to the details its kind keeps', async () => {
    expect(await invalid({ kind: 'deferred', reason: 'Seasonal load', dueDate: '2027-06-01' })).toBeNull()
    expect(normalizeDisposition({ kind: 'verified_earlier', reportNumber: ' SP-2026-000012 ', by: 'ignored', reason: '' } as Disposition)).toEqual({
      kind: 'verified_earlier', reason: null, by: null, reference: null, witnessed: null, reportNumber: 'SP-2026-000012', dueDate: null,
    })
  })
})

describe('exceptions of a record and the acceptance words', () => {
  const readings = (over: Record<string, { verdict: string; message?: string; justification?: string | null; disposition?: Disposition | null }>) =>
    Object.fromEntries(
      Object.entries(over).map(([fieldId, x]) => [fieldId, { fieldId, justification: x.justification ?? null, disposition: x.disposition ?? null, evaluation: { verdict: x.verdict, message: x.message ?? `${fieldId} ${x.verdict}`, display: { value: 1 } } }]),
    )
  const finding = (id: string, fieldId: string | null, severity: 'minor' | 'major' | 'critical', status: 'open' | 'resolved' = 'open') => ({ id, stepId: 'readings', fieldId, severity, status, description: `finding ${id}` })

  it('when a fail has only a justification, a marginal has neither, an item is deferred and a finding is open, then each is an exception with its follow-up', () => {
    const run = {
      definition: def,
      readings: readings({
        permits: { verdict: 'pass' },
        a: { verdict: 'fail', message: 'Voltage A 430 V is below the minimum 440 V', justification: 'Utility to re-tap; accepted meanwhile' },
        b: { verdict: 'marginal' },
        kw: { verdict: 'recorded' },
        avg: { verdict: 'pass' },
        ramp: { verdict: 'incomplete', disposition: d('deferred', { reason: 'Seasonal load', dueDate: '2027-06-01' }) },
      }),
      steps: {},
      findings: [finding('f1', null, 'major'), finding('f2', 'kw', 'minor', 'resolved')],
    }
    const ex = exceptionsOf(run)
    expect(ex.map((e) => [e.id, e.kind, e.severity])).toEqual([
      ['field:a', 'fail', null],
      ['field:b', 'marginal', null],
      ['field:ramp', 'deferred', null],
      ['finding:f1', 'finding', 'major'],
    ])
    expect(ex[0].followUp).toContain('Accepted on the justification “Utility to re-tap; accepted meanwhile”')
    expect(ex[2]).toMatchObject({ dueDate: '2027-06-01', followUp: 'Carry out and record by 2027-06-01.' })
    expect(acceptanceWords(ex.length)).toBe('Accepted with 4 exceptions')
    expect(acceptanceWords(0)).toBe('Accepted')
  })

  it('when a fail’s findings are all resolved or a marginal is justified, then neither is an exception; a critical open finding blocks acceptance', () => {
    const run = {
      definition: def,
      readings: readings({ a: { verdict: 'fail' }, b: { verdict: 'marginal', justification: 'Supply at the top of its band; utility informed' } }),
      steps: {},
      findings: [finding('f1', 'a', 'major', 'resolved'), finding('f2', null, 'critical')],
    }
    expect(exceptionsOf(run).map((e) => e.id)).toEqual(['finding:f2'])
    expect(blockingFindings(run.findings).map((f) => f.id)).toEqual(['f2'])
  })

  it('when a whole step is deferred, then it is one exception for the step, not one per field', () => {
    const run = { definition: def, readings: readings({}), steps: { readings: { stepId: 'readings', disposition: d('deferred', { reason: 'Meter on order', dueDate: '2027-01-15' }) } }, findings: [] }
    const ex = exceptionsOf(run)
    expect(ex).toHaveLength(1)
    expect(ex[0]).toMatchObject({ id: 'step:readings', kind: 'deferred', where: 'First › Readings', fieldId: null })
  })

  it('when work was done by others, then the performer’s statement names it', () => {
    const c = countRun(def, [], [{ stepId: 'start', disposition: d('by_others', { by: 'Field service engineer of the manufacturer', reference: 'FS-118', witnessed: false }) }])
    const others = byOthersOf(def, c)
    expect(others).toEqual([{ by: 'Field service engineer of the manufacturer', reference: 'FS-118', witnessed: false, where: ['First start'], checks: 1 }])
    expect(performerStatement(others)).toBe(
      'I performed this start-up and the readings are true, except the items recorded as done by others: First start by Field service engineer of the manufacturer (their record FS-118).',
    )
    expect(performerStatement([])).toBe('I performed this start-up and the readings are true.')
  })
})

describe('the chiller template with the one counting rule', () => {
  it('has a pre-work safety step that cannot be set aside', () => {
    const safety = chillerStartupDefinition.sections[0].steps[0]
    expect(safety).toMatchObject({ id: 'prestart-safety', safety: true })
    expect(safety.stop).toMatch(/^Do not proceed until/)
  })
})
