import { describe, expect, it } from 'vitest'
import { mount } from '@vue/test-utils'
import type { ChecklistDefinition, ChecklistField } from '@shared/schemas/checklist'
import { SAMPLE_DESIGN_POINTS, describeRule, exampleRamp, previewEvaluate, type PreviewContext } from '@/composables/useTemplatePreview'
import TemplateDiffEntry from '@/components/TemplateDiffEntry.vue'

const flow: ChecklistField = {
  id: 'chwFlow', label: 'Evaporator water flow', kind: 'number', quantity: 'volumetric_flow', unit: 'gpm', required: true,
  rule: { type: 'design', key: 'evaporatorWaterFlow', lowerPct: 10, upperPct: 10, warnLowerPct: 5, warnUpperPct: 5 },
}
const oil: ChecklistField = {
  id: 'oilRamp', label: 'Oil pressure', kind: 'time_series', quantity: 'pressure_differential', unit: 'psid', required: true,
  rule: { type: 'ramp', setpoint: 35, reachWithinS: 30, holdS: 20, floor: 25 },
}
const definition: ChecklistDefinition = { title: 'Chiller', unitSystem: 'IP', sections: [{ id: 's', title: 'S', steps: [{ id: 't', title: 'T', fields: [flow, oil] }] }] }
const ip = SAMPLE_DESIGN_POINTS.find((s) => s.unitSystem === 'IP')!
const ctx = (unitSystem: 'IP' | 'SI' = 'IP'): PreviewContext => ({ definition, designPoint: ip.designPoint, unitSystem })

describe('technician preview', () => {
  it('when a design-relative rule is described, then the words give the pass, marginal and fail limits from the sample design point', () => {
    expect(describeRule(flow, ctx())).toBe(
      'Pass 1140 gpm to 1260 gpm; marginal below 1140 gpm or above 1260 gpm; fail below 1080 gpm or above 1320 gpm (design 1200 gpm, −10 % to +10 %).',
    )
  })

  it('when the project works in SI, then the same limits are given in L/s', () => {
    expect(describeRule(flow, ctx('SI'))).toMatch(/^Pass 71\.9 L\/s to 79\.5 L\/s; .*fail below 68\.1 L\/s or above 83\.3 L\/s/)
  })

  it('when a value is typed, then the verdict is the one a run would give', () => {
    const r = previewEvaluate(flow, { value: 1290, unit: 'gpm' }, ctx())
    expect(r.ok && r.evaluation.verdict).toBe('marginal')
    const f = previewEvaluate(flow, { value: 1400, unit: 'gpm' }, ctx())
    expect(f.ok && f.evaluation.verdict).toBe('fail')
  })

  it('when a field is half-edited, then the preview says why it cannot judge instead of failing', () => {
    const broken: ChecklistField = { ...flow, unit: 'psig' }
    const r = previewEvaluate(broken, { value: 1, unit: 'gpm' }, ctx())
    expect(r.ok).toBe(false)
    expect(describeRule(broken, ctx())).toBe('Needs a quantity and unit before the limits can be read.')
  })

  it('when an example ramp is filled for a ramp rule, then it passes that rule', () => {
    const ramp = exampleRamp(oil, 'IP')!
    const r = previewEvaluate(oil, { value: ramp.points, unit: 'psid', driveStartS: ramp.driveStartS }, ctx())
    expect(r.ok && r.evaluation.verdict).toBe('pass')
    expect(describeRule(oil, ctx())).toBe('Reach 35 psid within 30 s of the start command; hold at or above it for 20 s before the drive starts; never fall below 25 psid afterwards.')
  })
})

describe('TemplateDiffEntry', () => {
  it('when a rule value changed, then it reads "rule.max: 120 → 125" with the change in words', () => {
    const wrapper = mount(TemplateDiffEntry, {
      props: {
        entry: { change: 'changed', level: 'field', id: 'oilPressure', path: 'sections[2].steps[0].fields[1]', label: 'Oil pressure', changes: [{ property: 'rule.max', before: 120, after: 125 }, { property: 'required', before: true, after: false }] },
      },
    })
    expect(wrapper.find('[data-test=diff-change]').text()).toBe('Changed')
    const lines = wrapper.findAll('.props li').map((li) => li.text().replace(/\s+/g, ' '))
    expect(lines).toEqual(['rule.max: 120 → 125', 'required: yes → no'])
  })
})
