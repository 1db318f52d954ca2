import { describe, expect, it } from 'vitest'
import { EngineeringError, saturationTempC, saturationTempF } from '../../shared/engineering'
import { chillerStartupDefinition } from '../../shared/library/chiller'
import { evaluateField, problemInProjectUnits } from '../../shared/rules'
import { sensibleNumber } from '../../shared/rules/problem-units'
import type { ChecklistField } from '../../shared/schemas/checklist'
import type { DesignPoint } from '../../shared/schemas/design-point'

const condSatTemp = chillerStartupDefinition.sections.flatMap((s) => s.steps.flatMap((st) => st.fields)).find((f) => f.id === 'condSatTemp') as ChecklistField
const designPoint = { refrigerant: 'R-134a' } as DesignPoint
const judge = (unitSystem: 'IP' | 'SI', psig: number) =>
  evaluateField(condSatTemp, null, { unitSystem, designPoint, definition: chillerStartupDefinition, readings: { condPressure: { value: psig, unit: 'psig' } } })

function thrown(f: () => unknown): EngineeringError {
  try {
    f()
  } catch (err) {
    if (err instanceof EngineeringError) return err
    throw err
  }
  throw new Error('nothing was thrown')
}

describe('a calculation refused inside a computed field, in the project units', () => {
  // The shipped R-134a table runs 0–140 °F, 6.47–229.23 psig (docs/REFERENCES.md §Refrigerant saturation and site barometric pressure).
  it('when 368 psig is past the saturation table in an I-P project, then the message is in psig and °F with the digits those units print', () => {
    const r = judge('IP', 368)
    expect(r.verdict).toBe('incomplete')
    expect(r.problem?.code).toBe('OUTSIDE_TABLE')
    expect(r.message).toBe('Saturated condensing temperature cannot be computed: 368 psig is outside the R-134a saturation table (6.5 psig to 229.2 psig, 0 °F to 140 °F)')
    expect(r.problem?.message).toBe('368 psig is outside the R-134a saturation table (6.5 psig to 229.2 psig, 0 °F to 140 °F)')
    expect(r.message).not.toMatch(/kPa|\d\.\d{3,}/)
  })

  it('when the same happens in an SI project, then it reads in kPa (gauge) and °C', () => {
    const r = judge('SI', 368)
    expect(r.problem?.code).toBe('OUTSIDE_TABLE')
    // 368 psig × 6.894757 kPa/psi = 2537 kPa (gauge); 0 °F = −17.8 °C, 140 °F = 60 °C.
    expect(r.message).toBe('Saturated condensing temperature cannot be computed: 2537 kPa (gauge) is outside the R-134a saturation table (45 kPa (gauge) to 1580 kPa (gauge), −17.8 °C to 60 °C)')
  })

  it('when a reading sits just past the end of the table, then enough digits are shown to tell it from the end', () => {
    const r = judge('IP', 229.24)
    expect(r.message).toBe('Saturated condensing temperature cannot be computed: 229.24 psig is outside the R-134a saturation table (6.47 psig to 229.23 psig, 0 °F to 140 °F)')
  })

  it('when the SI function refuses an absolute pressure, then an I-P project reads it in psia', () => {
    const err = thrown(() => saturationTempC('R-134a', 2638.5956837373687))
    expect(err.code).toBe('OUTSIDE_TABLE')
    // 2638.6 kPa = 382.7 psia at 6.894757 kPa/psi (docs/REFERENCES.md §Units, conversions and printed digits).
    expect(err.message).toBe('2638.6 kPa (abs) is outside the R-134a saturation table (146 kPa (abs) to 1681.8 kPa (abs), 0 °F to 140 °F)')
    expect(problemInProjectUnits(err, 'IP').message).toBe('382.7 psia is outside the R-134a saturation table (21.17 psia to 243.92 psia, 0 °F to 140 °F)')
    expect(problemInProjectUnits(err, 'IP').code).toBe('OUTSIDE_TABLE')
  })

  it('when the I-P function refuses a gauge pressure, then its own message says psig, as given', () => {
    expect(thrown(() => saturationTempF('R-134a', 400)).message).toBe('400 psig is outside the R-134a saturation table (6.5 psig to 229.2 psig, 0 °F to 140 °F)')
  })

  it('when a number has no known unit, then it is printed with at most three significant digits and a true minus', () => {
    expect(sensibleNumber(2638.5956837373687)).toBe('2639')
    expect(sensibleNumber(-10)).toBe('\u221210')
    expect(sensibleNumber(0.012345)).toBe('0.0123')
  })
})
