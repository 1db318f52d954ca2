import { describe, expect, it } from 'vitest'
import type { ChecklistField } from '../../shared/schemas/checklist'
import { physicalBoundsProblem } from '../../shared/rules'

const f = (quantity: ChecklistField['quantity'], unit: string, kind: ChecklistField['kind'] = 'number'): ChecklistField =>
  ({ id: 'x', label: 'Reading', kind, quantity, unit, required: true }) as ChecklistField

describe('physicalBoundsProblem', () => {
  it.each([
    // NIST SP 811: 1 psi = 6.894 757 kPa, so −14.696 psig is a perfect vacuum at 101.325 kPa; −15 psig is below it.
    [f('pressure_gauge', 'psig'), { value: -15, unit: 'psig' }, /below a perfect vacuum/],
    [f('pressure_gauge', 'psig'), { value: -14, unit: 'psig' }, null],
    [f('pressure_absolute', 'psia'), { value: -1, unit: 'psia' }, /cannot be negative/],
    [f('volumetric_flow', 'gpm'), { value: -5, unit: 'gpm' }, /Reading −5 gpm cannot be negative|Reading -5 gpm cannot be negative/],
    [f('volumetric_flow', 'gpm'), { value: 0, unit: 'gpm' }, null],
    [f('time', 's', 'timer'), { value: -2, unit: 's' }, /cannot be negative/],
    // −40 °F = −40 °C (the scales cross there) is the lowest plausible plant reading; 500 °F is a typing error.
    [f('temperature', 'degF'), { value: -40, unit: 'degF' }, null],
    [f('temperature', 'degF'), { value: 500, unit: 'degF' }, /outside −40 °C to 150 °C/],
    [f('temperature', 'degC'), { value: -300, unit: 'degC' }, /below absolute zero/],
    [f('pressure_differential', 'psid'), { value: -3, unit: 'psid' }, null],
  ])('when %# the entry is checked, then the answer is as expected', (field, entry, expected) => {
    const problem = physicalBoundsProblem(field, entry)
    if (expected === null) expect(problem).toBeNull()
    else expect(problem).toMatch(expected)
  })

  it('when a ramp has a negative time or pressure below vacuum, then it is refused', () => {
    const ramp = f('pressure_gauge', 'psig', 'time_series')
    expect(physicalBoundsProblem(ramp, { value: [[-1, 10]], unit: 'psig' })).toMatch(/time cannot be negative/)
    expect(physicalBoundsProblem(ramp, { value: [[0, 5], [3, -20]], unit: 'psig' })).toMatch(/below a perfect vacuum/)
    expect(physicalBoundsProblem(ramp, { value: [[0, 5], [3, 30]], unit: 'psig' })).toBeNull()
  })

  it('when the field is not measured, then nothing is checked', () => {
    expect(physicalBoundsProblem({ id: 'y', label: 'Y', kind: 'yes_no', required: true } as ChecklistField, { value: true })).toBeNull()
  })
})
