import { describe, expect, it } from 'vitest'
import type { ChecklistDefinition } from '@shared/schemas/checklist'
import {
  issuesUnder,
  parseIssuePath,
  readableMessage,
  selectionForIssue,
  structureProblem,
  useTemplateWorkingCopy,
} from '@/composables/useTemplateWorkingCopy'

const definition = (): ChecklistDefinition => ({
  title: 'Pump start-up',
  unitSystem: 'IP',
  sections: [
    {
      id: 'pre-start',
      title: 'Pre-start',
      steps: [
        {
          id: 'rotation',
          title: 'Rotation',
          fields: [
            { id: 'rotationCorrect', label: 'Rotation correct', kind: 'yes_no', required: true, rule: { type: 'yes_no', expected: true } },
            { id: 'couplingGuard', label: 'Coupling guard fitted', kind: 'yes_no', required: true, rule: { type: 'yes_no', expected: true } },
          ],
        },
        { id: 'alignment', title: 'Alignment', fields: [{ id: 'alignmentNotes', label: 'Alignment notes', kind: 'text', required: false }] },
      ],
    },
    {
      id: 'running',
      title: 'Running',
      steps: [
        {
          id: 'motor',
          title: 'Motor',
          fields: [{ id: 'motorCurrent', label: 'Motor current', kind: 'number', quantity: 'current', unit: 'A', required: true, rule: { type: 'range', min: 10, max: 40 } }],
        },
      ],
    },
  ],
})

const titles = (def: ChecklistDefinition) => def.sections.map((s) => s.steps.map((st) => st.id))

describe('useTemplateWorkingCopy: structure', () => {
  it('when a section is added, then it gets a unique id, one step with one field, and is selected', () => {
    const wc = useTemplateWorkingCopy(definition())
    wc.addSection()
    const added = wc.definition.value.sections[2]
    expect(added.id).toBe('section-1')
    expect(added.steps).toHaveLength(1)
    expect(added.steps[0].fields).toHaveLength(1)
    expect(wc.selection.value).toEqual({ kind: 'section', section: 2 })
    wc.addSection()
    expect(wc.definition.value.sections[3].id).toBe('section-2')
  })

  it('when the first step of a section moves up, then it becomes the last step of the section before, and stays selected', () => {
    const wc = useTemplateWorkingCopy(definition())
    wc.select({ kind: 'step', section: 1, step: 0 })
    wc.moveStep(1, 0, -1)
    expect(titles(wc.definition.value)).toEqual([['rotation', 'alignment', 'motor'], []])
    expect(wc.selection.value).toEqual({ kind: 'step', section: 0, step: 2 })
  })

  it('when a step moves down inside its section, then the steps swap and the selection follows the moved step', () => {
    const wc = useTemplateWorkingCopy(definition())
    wc.select({ kind: 'step', section: 0, step: 0 })
    wc.moveStep(0, 0, 1)
    expect(titles(wc.definition.value)).toEqual([['alignment', 'rotation'], ['motor']])
    expect(wc.selection.value).toEqual({ kind: 'step', section: 0, step: 1 })
  })

  it('when a field moves or another field is removed, then the open field stays the same field', () => {
    const wc = useTemplateWorkingCopy(definition())
    wc.select({ kind: 'step', section: 0, step: 0, field: 1 })
    wc.moveField(0, 0, 1, -1)
    expect(wc.definition.value.sections[0].steps[0].fields.map((f) => f.id)).toEqual(['couplingGuard', 'rotationCorrect'])
    expect(wc.selection.value).toEqual({ kind: 'step', section: 0, step: 0, field: 0 })
    wc.select({ kind: 'step', section: 0, step: 0, field: 1 })
    wc.removeField(0, 0, 0)
    expect(wc.definition.value.sections[0].steps[0].fields.map((f) => f.id)).toEqual(['rotationCorrect'])
    expect(wc.selection.value).toEqual({ kind: 'step', section: 0, step: 0, field: 0 })
  })

  it('when a field is added and duplicated, then both get ids no other field uses', () => {
    const wc = useTemplateWorkingCopy(definition())
    const k = wc.addField(1, 0, 'number')
    const fields = wc.definition.value.sections[1].steps[0].fields
    expect(fields[k]).toMatchObject({ id: 'reading1', kind: 'number', quantity: 'temperature', unit: 'degF' })
    const copy = wc.duplicateField(1, 0, 0)
    expect(fields[copy].id).toBe('motorCurrent1')
    expect(fields[copy].label).toBe('Motor current (copy)')
    expect(new Set(fields.map((f) => f.id)).size).toBe(fields.length)
  })

  it('when the selected section is removed, then the selection moves to the section now in its place', () => {
    const wc = useTemplateWorkingCopy(definition())
    wc.select({ kind: 'step', section: 0, step: 1 })
    wc.removeSection(0)
    expect(wc.definition.value.sections.map((s) => s.id)).toEqual(['running'])
    expect(wc.selection.value).toEqual({ kind: 'section', section: 0 })
  })
})

describe('useTemplateWorkingCopy: keeping a field consistent', () => {
  it('when a number field becomes a choice, then quantity and unit go, two choices and a choice rule come', () => {
    const wc = useTemplateWorkingCopy(definition())
    const field = wc.definition.value.sections[1].steps[0].fields[0]
    wc.setFieldKind(field, 'choice')
    expect(field.quantity).toBeUndefined()
    expect(field.unit).toBeUndefined()
    expect(field.choices).toHaveLength(2)
    expect(field.rule).toEqual({ type: 'choice', pass: ['ok'] })
  })

  it('when a field becomes a timer, then its quantity is time in seconds and a rule it can keep stays', () => {
    const wc = useTemplateWorkingCopy(definition())
    const field = wc.definition.value.sections[1].steps[0].fields[0]
    wc.setFieldKind(field, 'timer')
    expect(field).toMatchObject({ quantity: 'time', unit: 's', rule: { type: 'range', min: 10, max: 40 } })
  })

  it('when the quantity changes, then the unit becomes the template system’s unit for it', () => {
    const wc = useTemplateWorkingCopy({ ...definition(), unitSystem: 'SI' })
    const field = wc.definition.value.sections[1].steps[0].fields[0]
    wc.setFieldQuantity(field, 'volumetric_flow')
    expect(field.unit).toBe('Lps')
  })

  it('when the rule type changes, then values that mean the same carry over and the rest start from defaults', () => {
    const wc = useTemplateWorkingCopy(definition())
    const field = wc.definition.value.sections[1].steps[0].fields[0]
    field.rule = { type: 'design', key: 'fullLoadAmps', lowerPct: 20, upperPct: 5 }
    wc.setRuleType(field, 'design_offset')
    expect(field.rule).toEqual({ type: 'design_offset', key: 'fullLoadAmps', lower: 1, upper: 1 })
    wc.setRuleType(field, 'range')
    expect(field.rule).toEqual({ type: 'range', max: 100 })
    wc.setRuleType(field, null)
    expect(field.rule).toBeUndefined()
  })
})

describe('useTemplateWorkingCopy: validation by path', () => {
  it('when a rule has its maximum below its minimum, then the problem is reported at rule.max and counted under its step and section', async () => {
    const def = definition()
    def.sections[1].steps[0].fields[0].rule = { type: 'range', min: 40, max: 10 }
    const wc = useTemplateWorkingCopy(def)
    await wc.validate()
    const path = 'sections[1].steps[0].fields[0].rule.max'
    expect(wc.issues.value.map((i) => i.path)).toContain(path)
    expect(wc.issueAt(path)).toBe('Must not be below min')
    expect(wc.issueCountUnder('sections[1].steps[0]')).toBe(1)
    expect(wc.issueCountUnder('sections[0]')).toBe(0)
  })

  it('when two fields share an id, then the second one’s id is named with where the first is', async () => {
    const def = definition()
    def.sections[1].steps[0].fields[0].id = 'rotationCorrect'
    const wc = useTemplateWorkingCopy(def)
    await wc.validate()
    expect(wc.issueAt('sections[1].steps[0].fields[0].id')).toMatch(/^Duplicate field id "rotationCorrect" \(first used at sections\[0\]\.steps\[0\]\.fields\[0\]\.id\)/)
  })

  it('when a problem is fixed, then the next validation clears it', async () => {
    const def = definition()
    def.sections[0].steps[0].fields[0].label = ''
    const wc = useTemplateWorkingCopy(def, { validateDelayMs: 0 })
    expect(await wc.validate()).toHaveLength(1)
    wc.definition.value.sections[0].steps[0].fields[0].label = 'Rotation correct'
    expect(await wc.validate()).toEqual([])
    expect(wc.allIssues.value).toEqual([])
  })

  it('when the server reports a problem the schema did not, then it is shown until the next edit', async () => {
    const wc = useTemplateWorkingCopy(definition(), { validateDelayMs: 0 })
    wc.serverIssues.value = [{ path: 'sections[0].title', message: 'sections[0].title is already used by another template' }]
    expect(wc.issueAt('sections[0].title')).toBe('Is already used by another template')
    wc.definition.value.sections[0].title = 'Pre-start checks'
    await Promise.resolve()
    expect(wc.serverIssues.value).toEqual([])
  })
})

describe('issue paths', () => {
  it('when a path is parsed, then its section, step, field and property are told apart', () => {
    expect(parseIssuePath('sections[2].steps[0].fields[13].rule.warnMax')).toEqual({ section: 2, step: 0, field: 13, property: 'rule.warnMax' })
    expect(parseIssuePath('sections[1].title')).toEqual({ section: 1, property: 'title' })
    expect(parseIssuePath('title')).toEqual({ property: 'title' })
    expect(selectionForIssue('sections[2].steps[0].fields[13].rule.warnMax')).toEqual({ kind: 'step', section: 2, step: 0, field: 13 })
    expect(selectionForIssue('sections[1].steps')).toEqual({ kind: 'section', section: 1 })
    expect(selectionForIssue('unitSystem')).toEqual({ kind: 'definition' })
  })

  it('when issues are filtered by an item, then sections[1] does not take in sections[10]', () => {
    const issues = [
      { path: 'sections[1].title', message: 'a' },
      { path: 'sections[10].title', message: 'b' },
      { path: 'sections[1]', message: 'c' },
      { path: 'sections[1].steps[0].id', message: 'd' },
    ]
    expect(issuesUnder(issues, 'sections[1]').map((i) => i.message)).toEqual(['a', 'c', 'd'])
    expect(readableMessage({ path: 'x.y', message: 'x.y must be a number' })).toBe('Must be a number')
  })

  it('when imported JSON lacks the lists the editor shows, then the first missing one is named', () => {
    expect(structureProblem([])).toMatch(/must be an object/)
    expect(structureProblem({ title: 'x' })).toBe('The JSON has no "sections" list.')
    expect(structureProblem({ sections: [{ steps: [{ fields: [1] }] }] })).toBe('sections[0].steps[0].fields[0] is not an object.')
    expect(structureProblem(definition())).toBeNull()
  })
})
