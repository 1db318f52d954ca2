import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import type { ChecklistDefinition, ChecklistField } from '../../shared/schemas/checklist'
import { diffDefinitions, type DiffEntry } from '../../shared/templates'
import { definition } from './fixtures'

// The diff is the "what changed between versions" view a publisher reviews (issue #4: steps and fields added,
// removed, changed, with the changed rule values). Fixture: tests/shared/fixtures.ts, sections water → electrical → start.

const clone = (): ChecklistDefinition => structuredClone(definition)
const fieldOf = (d: ChecklistDefinition, id: string): ChecklistField => {
  for (const s of d.sections) for (const st of s.steps) for (const f of st.fields) if (f.id === id) return f
  throw new Error(`no field ${id}`)
}
const brief = (e: DiffEntry) => `${e.change} ${e.level} ${e.id}`

describe('diffDefinitions: identical versions', () => {
  it('when a version is compared with itself, then there are no entries and every count is zero', () => {
    expect(diffDefinitions(definition, clone())).toEqual({ summary: { added: 0, removed: 0, changed: 0, moved: 0 }, entries: [] })
  })
  it('when `required: true` is spelled out in one version and left to its default in the other, then nothing changed', () => {
    const to = clone()
    delete (fieldOf(to, 'chwFlow') as { required?: boolean }).required
    expect(diffDefinitions(definition, to).entries).toEqual([])
  })
})

describe('diffDefinitions: changed rule values are separate property changes', () => {
  it.each([
    ['a raised maximum', (d: ChecklistDefinition) => (fieldOf(d, 'oilPressure').rule = { type: 'range', min: 25, warnMin: 30, max: 65 }), 'oilPressure', [{ property: 'rule.max', before: 60, after: 65 }]],
    ['a warning band dropped', (d: ChecklistDefinition) => (fieldOf(d, 'oilPressure').rule = { type: 'range', min: 25, max: 60 }), 'oilPressure', [{ property: 'rule.warnMin', before: 30, after: undefined }]],
    ['a rule changed from range to nominal', (d: ChecklistDefinition) => (fieldOf(d, 'softStart').rule = { type: 'nominal', nominal: 5, tolerance: 2 }), 'softStart', [
      { property: 'rule.type', before: 'range', after: 'nominal' },
      { property: 'rule.min', before: 3, after: undefined },
      { property: 'rule.max', before: 8, after: undefined },
      { property: 'rule.nominal', before: undefined, after: 5 },
      { property: 'rule.tolerance', before: undefined, after: 2 },
    ]],
    ['a rule removed', (d: ChecklistDefinition) => delete fieldOf(d, 'rotation').rule, 'rotation', [
      { property: 'rule.type', before: 'yes_no', after: undefined },
      { property: 'rule.expected', before: true, after: undefined },
    ]],
    ['a passing choice added', (d: ChecklistDefinition) => (fieldOf(d, 'starterType').rule = { type: 'choice', pass: ['solid_state', 'wye_delta'] }), 'starterType', [
      { property: 'rule.pass', before: ['solid_state'], after: ['solid_state', 'wye_delta'] },
      { property: 'rule.marginal', before: ['wye_delta'], after: undefined },
    ]],
    ['a new expression', (d: ChecklistDefinition) => (fieldOf(d, 'capacity').computed = { expression: 'chwFlow * (chwEntering - chwLeaving) / 24' }), 'capacity', [
      { property: 'computed.expression', before: 'capacityTons(chwFlow, chwEntering, chwLeaving)', after: 'chwFlow * (chwEntering - chwLeaving) / 24' },
    ]],
    ['a ramp hold lengthened', (d: ChecklistDefinition) => (fieldOf(d, 'oilRamp').rule = { type: 'ramp', setpoint: 35, reachWithinS: 30, holdS: 25, floor: 25, warnFloor: 30 }), 'oilRamp', [{ property: 'rule.holdS', before: 20, after: 25 }]],
  ] as const)('when a field has %s, then one changed entry lists each value before and after', (_n, mutate, id, changes) => {
    const to = clone()
    mutate(to)
    const diff = diffDefinitions(definition, to)
    expect(diff.entries).toHaveLength(1)
    expect(diff.entries[0]).toMatchObject({ change: 'changed', level: 'field', id })
    expect(diff.entries[0].changes).toEqual(changes)
    expect(diff.summary).toEqual({ added: 0, removed: 0, changed: 1, moved: 0 })
  })

  it('when label, unit, required, help and cautions change together, then they are listed in that order', () => {
    const to = clone()
    Object.assign(fieldOf(to, 'oilPressure'), { label: 'Oil differential pressure', unit: 'kPad', required: false, help: 'Read at the panel.', cautions: ['Stay clear of the coupling.'] })
    const [e] = diffDefinitions(definition, to).entries
    expect(e.changes?.map((c) => c.property)).toEqual(['label', 'unit', 'required', 'help', 'cautions'])
    expect(e.changes?.[0]).toEqual({ property: 'label', before: 'Oil pressure', after: 'Oil differential pressure' })
    expect(e.changes?.[2]).toEqual({ property: 'required', before: true, after: false })
    expect(e.changes?.[4]).toEqual({ property: 'cautions', before: undefined, after: ['Stay clear of the coupling.'] })
    expect(e.label).toBe('Oil differential pressure')
    expect(e.path).toBe('sections[2].steps[0].fields[1]')
    expect(e.parentId).toBe('lubrication')
  })

  it('when a step title and its cautions change, then the step entry carries title and cautions, not its fields', () => {
    const to = clone()
    to.sections[2].steps[0].title = 'Pre-lubrication'
    to.sections[2].steps[0].cautions = ['Never bypass the oil pressure safety.', 'Lock out the starter before opening it.']
    const diff = diffDefinitions(definition, to)
    expect(diff.entries).toEqual([
      {
        change: 'changed', level: 'step', id: 'lubrication', path: 'sections[2].steps[0]', label: 'Pre-lubrication', parentId: 'start',
        changes: [
          { property: 'title', before: 'Pre-lubrication and oil pressure', after: 'Pre-lubrication' },
          { property: 'cautions', before: ['Never bypass the oil pressure safety.'], after: ['Never bypass the oil pressure safety.', 'Lock out the starter before opening it.'] },
        ],
      },
    ])
  })

  it('when a section title changes, then the section entry has no parentId and the change is "title"', () => {
    const to = clone()
    to.sections[1].title = 'Electrical supply'
    expect(diffDefinitions(definition, to).entries).toEqual([
      { change: 'changed', level: 'section', id: 'electrical', path: 'sections[1]', label: 'Electrical supply', changes: [{ property: 'title', before: 'Electrical', after: 'Electrical supply' }] },
    ])
  })
})

describe('diffDefinitions: added and removed', () => {
  it('when a field is added in the middle of a step, then it is added at its new path and its neighbours are not moved', () => {
    const to = clone()
    to.sections[0].steps[0].fields.splice(2, 0, { id: 'chwDeltaP', label: 'Evaporator pressure drop', kind: 'number', quantity: 'pressure_differential', unit: 'ftH2O', required: false })
    const diff = diffDefinitions(definition, to)
    expect(diff.entries).toEqual([{ change: 'added', level: 'field', id: 'chwDeltaP', path: 'sections[0].steps[0].fields[2]', label: 'Evaporator pressure drop', parentId: 'evaporator' }])
    expect(diff.summary).toEqual({ added: 1, removed: 0, changed: 0, moved: 0 })
  })

  it('when a field is removed, then it is listed with its old path, after its old neighbour', () => {
    const to = clone()
    to.sections[2].steps[0].fields.splice(1, 1) // oilPressure
    fieldOf(to, 'softStart').label = 'Start command to full speed'
    const diff = diffDefinitions(definition, to)
    expect(diff.entries.map(brief)).toEqual(['removed field oilPressure', 'changed field softStart'])
    expect(diff.entries[0]).toEqual({ change: 'removed', level: 'field', id: 'oilPressure', path: 'sections[2].steps[0].fields[1]', label: 'Oil pressure', parentId: 'lubrication' })
  })

  it('when the first field of a step is removed, then it opens the step\'s entries', () => {
    const to = clone()
    to.sections[0].steps[0].fields.shift()
    fieldOf(to, 'chwEntering').required = false
    expect(diffDefinitions(definition, to).entries.map(brief)).toEqual(['removed field chwFlow', 'changed field chwEntering'])
  })

  it('when a new step with two fields is added, then the step comes first and each field follows with the step as parent', () => {
    const to = clone()
    to.sections[1].steps.push({
      id: 'starter', title: 'Starter', fields: [
        { id: 'coolantLevel', label: 'Starter coolant level correct', kind: 'yes_no', required: true, rule: { type: 'yes_no', expected: true } },
        { id: 'starterNotes', label: 'Starter notes', kind: 'text', required: false },
      ],
    })
    const diff = diffDefinitions(definition, to)
    expect(diff.entries).toEqual([
      { change: 'added', level: 'step', id: 'starter', path: 'sections[1].steps[1]', label: 'Starter', parentId: 'electrical' },
      { change: 'added', level: 'field', id: 'coolantLevel', path: 'sections[1].steps[1].fields[0]', label: 'Starter coolant level correct', parentId: 'starter' },
      { change: 'added', level: 'field', id: 'starterNotes', path: 'sections[1].steps[1].fields[1]', label: 'Starter notes', parentId: 'starter' },
    ])
    expect(diff.summary.added).toBe(3)
  })

  it('when a whole section is removed, then the section, its step and its fields are removed, in old order, where it was', () => {
    const to = clone()
    to.sections.splice(1, 1) // electrical
    // specificPower is gone, so nothing refers to capacity any longer: the remaining definition stays consistent.
    const diff = diffDefinitions(definition, to)
    expect(diff.entries.map(brief)).toEqual([
      'removed section electrical', 'removed step supply',
      'removed field voltsAB', 'removed field voltsBC', 'removed field voltsCA', 'removed field voltageUnbalance', 'removed field inputKw', 'removed field specificPower',
    ])
    expect(diff.entries[0].path).toBe('sections[1]')
    expect(diff.entries[7]).toMatchObject({ path: 'sections[1].steps[0].fields[5]', parentId: 'supply' })
    expect(diff.summary).toEqual({ added: 0, removed: 8, changed: 0, moved: 0 })
  })
})

describe('diffDefinitions: moved', () => {
  it('when a field moves to another step, then it is moved with the new step as parent and its new path', () => {
    const to = clone()
    const [rotation] = to.sections[2].steps[0].fields.splice(3, 1)
    to.sections[1].steps[0].fields.unshift(rotation)
    const diff = diffDefinitions(definition, to)
    expect(diff.entries).toEqual([{ change: 'moved', level: 'field', id: 'rotation', path: 'sections[1].steps[0].fields[0]', label: 'Rotation correct', parentId: 'supply' }])
    expect(diff.summary).toEqual({ added: 0, removed: 0, changed: 0, moved: 1 })
  })

  it('when a field moves and its rule changes too, then one moved entry carries the rule change', () => {
    const to = clone()
    const [oil] = to.sections[2].steps[0].fields.splice(1, 1)
    oil.rule = { type: 'range', min: 25, warnMin: 30, max: 65 }
    to.sections[1].steps[0].fields.push(oil)
    expect(diffDefinitions(definition, to).entries).toEqual([
      { change: 'moved', level: 'field', id: 'oilPressure', path: 'sections[1].steps[0].fields[6]', label: 'Oil pressure', parentId: 'supply', changes: [{ property: 'rule.max', before: 60, after: 65 }] },
    ])
  })

  it('when two fields swap places in a step, then only the one taken out of order is moved', () => {
    const to = clone()
    const f = to.sections[2].steps[0].fields
    ;[f[0], f[1]] = [f[1], f[0]] // oilPressure before oilRamp
    const diff = diffDefinitions(definition, to)
    expect(diff.summary).toEqual({ added: 0, removed: 0, changed: 0, moved: 1 })
    expect(['oilRamp', 'oilPressure']).toContain(diff.entries[0].id)
  })

  it('when the last section is moved to the front, then that section is moved and nothing inside it is', () => {
    const to = clone()
    to.sections.unshift(to.sections.pop()!)
    expect(diffDefinitions(definition, to).entries).toEqual([{ change: 'moved', level: 'section', id: 'start', path: 'sections[0]', label: 'Start sequence' }])
  })

  it('when a step moves to another section, then the step is moved and its fields (same step) are not', () => {
    const to = clone()
    const [supply] = to.sections[1].steps.splice(0, 1)
    to.sections[1].steps.push({ id: 'blank', title: 'Placeholder step', fields: [{ id: 'note', label: 'Note', kind: 'text', required: false }] })
    to.sections[0].steps.push(supply)
    const diff = diffDefinitions(definition, to)
    expect(diff.entries.map(brief)).toEqual(['moved step supply', 'added step blank', 'added field note'])
    expect(diff.entries[0]).toMatchObject({ path: 'sections[0].steps[1]', parentId: 'water' })
  })

  it('when a step is replaced and one of its fields moves into the new step, then that field is moved, the rest removed', () => {
    const to = clone()
    const supply = to.sections[1].steps[0]
    const inputKw = supply.fields.find((f) => f.id === 'inputKw')!
    to.sections[1].steps = [{ id: 'power', title: 'Power', fields: [inputKw] }]
    const diff = diffDefinitions(definition, to)
    // supply was the first step, so with no older sibling before it the removal opens the section's entries.
    expect(diff.entries.map(brief)).toEqual([
      'removed step supply', 'removed field voltsAB', 'removed field voltsBC', 'removed field voltsCA', 'removed field voltageUnbalance', 'removed field specificPower',
      'added step power', 'moved field inputKw',
    ])
    expect(diff.entries[0]).toMatchObject({ path: 'sections[1].steps[0]', parentId: 'electrical' })
    expect(diff.entries[7]).toMatchObject({ path: 'sections[1].steps[0].fields[0]', parentId: 'power' })
  })
})

describe('diffDefinitions: document order of the newer version', () => {
  it('when changes are spread over the definition, then entries follow the newer version top to bottom, removed ones where they were', () => {
    const to = clone()
    fieldOf(to, 'remarks').label = 'Remarks and findings'
    fieldOf(to, 'chwFlow').rule = { type: 'design', key: 'evaporatorWaterFlow', lowerPct: 10, upperPct: 10, warnLowerPct: 4, warnUpperPct: 5 }
    to.sections[1].steps[0].fields.splice(4, 1) // inputKw — specificPower is changed to not need it
    fieldOf(to, 'specificPower').computed = { expression: 'kwPerTon(400, capacity)' }
    to.sections[0].title = 'Water'
    const diff = diffDefinitions(definition, to)
    expect(diff.entries.map(brief)).toEqual([
      'changed section water', 'changed field chwFlow', 'removed field inputKw', 'changed field specificPower', 'changed field remarks',
    ])
    expect(diff.entries[1].changes).toEqual([{ property: 'rule.warnLowerPct', before: 5, after: 4 }])
    expect(diff.summary).toEqual({ added: 0, removed: 1, changed: 4, moved: 0 })
  })
})

describe('property: every item of either version is accounted for exactly once', () => {
  const ids = (d: ChecklistDefinition) => d.sections.flatMap((s) => s.steps.flatMap((st) => st.fields.map((f) => f.id)))
  it('when fields are shuffled among steps and dropped at random, then each field id appears at most once, every dropped one is removed and the counts add up', () => {
    fc.assert(
      fc.property(fc.array(fc.nat(), { minLength: 19, maxLength: 19 }), fc.array(fc.boolean(), { minLength: 19, maxLength: 19 }), (keys, drop) => {
        const to = clone()
        const all = to.sections.flatMap((s) => s.steps.flatMap((st) => st.fields))
        const kept = all.filter((_, i) => !drop[i])
        const steps = to.sections.flatMap((s) => s.steps)
        steps.forEach((st) => (st.fields = []))
        kept.forEach((f, i) => steps[keys[i] % steps.length].fields.push(f))
        const diff = diffDefinitions(definition, to)
        const fieldEntries = diff.entries.filter((e) => e.level === 'field')
        const seen = fieldEntries.map((e) => e.id)
        expect(new Set(seen).size).toBe(seen.length)
        const removed = ids(definition).filter((id) => !ids(to).includes(id))
        expect(fieldEntries.filter((e) => e.change === 'removed').map((e) => e.id).sort()).toEqual(removed.sort())
        expect(diff.summary.added + diff.summary.removed + diff.summary.changed + diff.summary.moved).toBe(diff.entries.length)
        // A field that stays in its step with no change never appears unless it was taken out of order.
        for (const e of fieldEntries) expect(e.change === 'removed' || e.change === 'moved').toBe(true)
      }),
    )
  })
})
