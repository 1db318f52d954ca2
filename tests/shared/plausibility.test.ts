import { describe, expect, it } from 'vitest'
import { chillerStartupDefinition } from '../../shared/library/chiller'
import { pumpStartupDefinition } from '../../shared/library/pump'
import { evaluateField, plausibilityQuestion, shiftDecimalPoint } from '../../shared/rules'
import type { ChecklistDefinition, ChecklistField } from '../../shared/schemas/checklist'
import type { DesignPoint, PumpDesignPoint } from '../../shared/schemas/design-point'
import { saturationPressurePsig } from '../../shared/engineering'

// The plausible bands are common practice (docs/REFERENCES.md §Plausibility of a typed value), not a standard.

function fieldOf(definition: ChecklistDefinition, id: string): ChecklistField {
  for (const s of definition.sections) for (const st of s.steps) for (const f of st.fields) if (f.id === id) return f
  throw new Error(`no field ${id}`)
}
const chiller = (id: string) => fieldOf(chillerStartupDefinition, id)

// An invented R-134a machine: 54 → 42 °F at 445 gpm, condenser 85 → 94.3 °F.
const designPoint: DesignPoint = {
  refrigerant: 'R-134a',
  capacity: { value: 220, unit: 'TR' },
  evaporatorEnteringWaterTemp: { value: 54, unit: 'degF' },
  evaporatorLeavingWaterTemp: { value: 42, unit: 'degF' },
  evaporatorWaterFlow: { value: 445, unit: 'gpm' },
  condenserEnteringWaterTemp: { value: 85, unit: 'degF' },
  condenserLeavingWaterTemp: { value: 94.3, unit: 'degF' },
  condenserWaterFlow: { value: 660, unit: 'gpm' },
  voltage: { value: 460, unit: 'V' },
  fullLoadAmps: { value: 420, unit: 'A' },
  oilPressureSetpoint: { value: 35, unit: 'psid' },
}
const context = { designPoint }

describe('plausibilityQuestion', () => {
  it('when 368 psig is typed for the evaporator pressure of a machine that evaporates near 37 psig, then it asks whether 36.8 psig was meant', () => {
    // R-134a saturates at 37.0 psig at the design leaving chilled-water temperature of 42 °F (shared saturation table).
    expect(saturationPressurePsig('R-134a', 42)).toBeCloseTo(37.0, 1)
    const q = plausibilityQuestion(chiller('evapPressure'), { value: 368, unit: 'psig' }, context, '368')
    expect(q).not.toBeNull()
    expect(q!.message).toBe('368 psig is about ten times the design evaporator pressure (37 psig).')
    expect(q!.question).toBe('Did you mean 36.8 psig?')
    expect(q!.suggestion).toMatchObject({ value: 36.8, unit: 'psig', digits: '36.8', shift: 0.1 })
    expect(q!.reference.source).toBe('design')
    // Judged as absolute pressure: 37 psig is 51.7 psia, so the band runs from a third to three times that.
    expect(q!.band.min).toBeCloseTo((37.0 + 14.696) / 3 - 14.696, 0)
    expect(q!.band.max).toBeCloseTo((37.0 + 14.696) * 3 - 14.696, 0)
  })

  it('when the condenser pressure is typed a tenth of design, then the condenser side is the reference, not the evaporator', () => {
    const q = plausibilityQuestion(chiller('condPressure'), { value: 11.2, unit: 'psig' }, context, '11.2')
    expect(q!.message).toBe(`11.2 psig is about a tenth of the design condenser pressure (${saturationPressurePsig('R-134a', 94.3).toFixed(1)} psig).`)
    expect(q!.question).toBe('Did you mean 112 psig?')
  })

  it('when 4450 gpm is typed against a design flow of 445 gpm, then it asks whether 445 gpm was meant, in the digits typed', () => {
    const q = plausibilityQuestion(chiller('chwFlow'), { value: 4450, unit: 'gpm' }, context, '4450')
    expect(q!.message).toBe('4450 gpm is about ten times the design chilled-water flow (445 gpm).')
    expect(q!.question).toBe('Did you mean 445 gpm?')
    expect(q!.suggestion?.value).toBe(445)
  })

  it('when a plausible value is typed, then there is no question, though the rule may still fail it', () => {
    expect(plausibilityQuestion(chiller('chwFlow'), { value: 440, unit: 'gpm' }, context, '440')).toBeNull()
    expect(plausibilityQuestion(chiller('evapPressure'), { value: 36.8, unit: 'psig' }, context, '36.8')).toBeNull()
    // 300 gpm fails the ±10 % rule, and that is a fail to record, not a typing slip to question.
    expect(evaluateField(chiller('chwFlow'), { value: 300, unit: 'gpm' }, { ...context, unitSystem: 'IP', definition: chillerStartupDefinition }).verdict).toBe('fail')
    expect(plausibilityQuestion(chiller('chwFlow'), { value: 300, unit: 'gpm' }, context, '300')).toBeNull()
  })

  it('when a field has no design value and no limits, then there is no question whatever is typed', () => {
    expect(chiller('trainingHours').rule).toBeUndefined()
    expect(plausibilityQuestion(chiller('trainingHours'), { value: 4000, unit: 'h' }, context, '4000')).toBeNull()
    // The pump's suction pressure: a pump design point states no gauge pressure and the field has no limits.
    const pump: PumpDesignPoint = {
      pumpDesignFlow: { value: 1200, unit: 'gpm' }, pumpDesignHead: { value: 80, unit: 'ftH2O' }, motorRatedPower: { value: 40, unit: 'hp' },
      motorRatedSpeed: { value: 1780, unit: 'rpm' }, voltage: { value: 460, unit: 'V' }, fullLoadAmps: { value: 48, unit: 'A' },
    }
    expect(plausibilityQuestion(fieldOf(pumpStartupDefinition, 'suctionPressure'), { value: 2500, unit: 'psig' }, { designPoint: pump }, '2500')).toBeNull()
  })

  it('when a design rule has no design value on this machine, then there is no question (the value is not judged either)', () => {
    const { oilPressureSetpoint: _, ...without } = designPoint
    expect(plausibilityQuestion(chiller('oilPressureRunning'), { value: 350, unit: 'psid' }, { designPoint: without as DesignPoint }, '350')).toBeNull()
    expect(plausibilityQuestion(chiller('oilPressureRunning'), { value: 350, unit: 'psid' }, context, '350')?.question).toBe('Did you mean 35 psid?')
  })

  it('when a field has limits and no design value, then the limits are the reference and a reading just past them is not questioned', () => {
    const oil = chiller('oilTempRunning') // 100–165 °F
    expect(plausibilityQuestion(oil, { value: 171, unit: 'degF' }, context, '171')).toBeNull()
    const q = plausibilityQuestion(oil, { value: 13.5, unit: 'degF' }, context, '13.5')
    expect(q!.message).toBe('13.5 °F is 86.5 °F below the minimum (100 °F).')
    expect(q!.question).toBe('Did you mean 135 °F?')
    const hours = plausibilityQuestion(chiller('oilHeaterHours'), { value: 1.8, unit: 'h' }, context, '1.8')
    expect(hours!.question).toBe('Did you mean 18 h?')
  })

  it('when no decimal shift lands near the reference, then it still asks but suggests nothing', () => {
    // 100 A at light load against 420 A full-load amps: ×10 would be 1000 A, further from 420 A than a factor of two.
    const q = plausibilityQuestion(chiller('ampsA'), { value: 100, unit: 'A' }, context, '100')
    expect(q!.message).toBe('100 A is about a quarter of the full-load amps (420 A).')
    expect(q!.suggestion).toBeNull()
    expect(q!.question).toBeNull()
  })

  it('when the value is typed in the project unit of an SI project, then the question is in that unit', () => {
    const q = plausibilityQuestion(chiller('chwFlow'), { value: 281, unit: 'Lps' }, context, '281')
    expect(q!.message).toBe('281 L/s is about ten times the design chilled-water flow (28.1 L/s).') // 445 gpm = 28.07 L/s
    expect(q!.question).toBe('Did you mean 28.1 L/s?')
  })

  it('when a temperature is typed a tenth of design, then it is worded as a difference, since °F has no true zero', () => {
    const q = plausibilityQuestion(chiller('chwLeaving'), { value: 4.2, unit: 'degF' }, context, '4.2')
    expect(q!.message).toBe('4.2 °F is 37.8 °F below the design leaving chilled-water temperature (42 °F).')
    expect(q!.question).toBe('Did you mean 42 °F?')
  })

  it('when the value cannot be a measurement at all, or the field is computed, then it is not questioned (it is refused or not typed)', () => {
    expect(plausibilityQuestion(chiller('chwFlow'), { value: -4450, unit: 'gpm' }, context, '-4450')).toBeNull()
    expect(plausibilityQuestion(chiller('capacity'), { value: 5000, unit: 'TR' }, context)).toBeNull()
  })
})

describe('shiftDecimalPoint', () => {
  it.each([
    ['368', -1, '36.8'],
    ['4450', -1, '445'],
    ['445', 1, '4450'],
    ['3.68', 1, '36.8'],
    ['0.368', 2, '36.8'],
    ['36.80', -1, '3.680'],
    ['5', -2, '0.05'],
    ['-368', -1, '\u221236.8'],
    ['12,5', 1, '125'],
  ] as const)('when "%s" has its point moved %d places, then it reads "%s"', (typed, places, expected) => {
    expect(shiftDecimalPoint(typed, places)?.digits).toBe(expected)
  })
})
