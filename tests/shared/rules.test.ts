import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { EngineeringError } from '../../shared/engineering/errors'
import { classify, evaluateChecklist, evaluateField, judgeInterval, judgeRamp, parseExpression, worstVerdict } from '../../shared/rules'
import type { ChecklistField } from '../../shared/schemas/checklist'
import type { FieldEntry } from '../../shared/schemas/reading'
import { definition, designPoint, field } from './fixtures'

const ip = { unitSystem: 'IP' as const, designPoint, definition }
const si = { unitSystem: 'SI' as const, designPoint, definition }

describe('evaluateField on a range with a warning band (oil pressure 25–60 psid, warning below 30 psid)', () => {
  // Differential oil pressure setpoints around 25–40 psid: REFERENCES.md §7 [CP]
  it.each([
    [18, 'fail', 'Oil pressure 18 psid is below the minimum 25 psid'],
    [25, 'marginal', 'Oil pressure 25 psid is within limits but below the warning level 30 psid (minimum 25 psid)'],
    [27.5, 'marginal', 'Oil pressure 27.5 psid is within limits but below the warning level 30 psid (minimum 25 psid)'],
    [30, 'pass', 'Oil pressure 30 psid is within 25 to 60 psid'],
    [60, 'pass', 'Oil pressure 60 psid is within 25 to 60 psid'],
    [61, 'fail', 'Oil pressure 61 psid is above the maximum 60 psid'],
  ] as const)('when %d psid is entered, then the verdict is %s with a plain message', (value, verdict, message) => {
    const r = evaluateField(field('oilPressure'), { value, unit: 'psid' }, ip)
    expect(r.verdict).toBe(verdict)
    expect(r.message).toBe(message)
  })
  it('when the project is SI and 124 kPa is entered, then the message and limits are in kPa and the canonical value in Pa', () => {
    const r = evaluateField(field('oilPressure'), { value: 124, unit: 'kPad' }, si)
    expect(r.verdict).toBe('fail')
    expect(r.message).toBe('Oil pressure 124 kPa (diff) is below the minimum 172 kPa (diff)') // 25 psid × 6.894757 (NIST SP 811) [S]
    expect(r.canonical?.unit).toBe('Pad')
    expect(r.canonical?.value).toBeCloseTo(124000, 6)
    expect(r.limits?.canonical.min).toBeCloseTo(25 * 6894.757, 0)
    expect(r.limits?.display.unit).toBe('kPad')
  })
  it('when 25 psid is entered in kPa (172.369 kPa), then it is not failed by rounding', () => {
    expect(evaluateField(field('oilPressure'), { value: 172.3689323, unit: 'kPad' }, ip).verdict).toBe('marginal')
  })
  it('when the value rounds to the limit, then the message shows enough decimals to tell them apart', () => {
    expect(evaluateField(field('oilPressure'), { value: 24.98, unit: 'psid' }, ip).message).toBe('Oil pressure 24.98 psid is below the minimum 25 psid')
  })
})

describe('evaluateField on design-relative rules', () => {
  // Flow within ±10 % of design (common practice); design flow 1200 gpm (2.4 gpm/ton × 500 tons, AHRI 550/590 [S])
  it.each([
    [1050, 'fail', 'Evaporator water flow 1050 gpm is below the minimum 1080 gpm (design 1200 gpm, −10 % to +10 %)'],
    [1100, 'marginal', 'Evaporator water flow 1100 gpm is within limits but below the warning level 1140 gpm (minimum 1080 gpm; design 1200 gpm, −10 % to +10 %)'],
    [1200, 'pass', 'Evaporator water flow 1200 gpm is within 1080 to 1320 gpm (design 1200 gpm, −10 % to +10 %)'],
    [1330, 'fail', 'Evaporator water flow 1330 gpm is above the maximum 1320 gpm (design 1200 gpm, −10 % to +10 %)'],
  ] as const)('when %d gpm is entered, then the verdict is %s', (value, verdict, message) => {
    const r = evaluateField(field('chwFlow'), { value, unit: 'gpm' }, ip)
    expect(r.verdict).toBe(verdict)
    expect(r.message).toBe(message)
  })
  it('when a leaving water offset of ±1 °F is judged in an SI project, then the band is ±0.56 K around 6.67 °C', () => {
    const r = evaluateField(field('chwLeaving'), { value: 45.5, unit: 'degF' }, si)
    expect(r.verdict).toBe('fail')
    expect(r.limits?.display.max).toBeCloseTo(45 / 1.8 - 32 / 1.8, 9)
    expect(r.message).toMatch(/^Leaving chilled water 7.5 °C is above the maximum 7.2 °C \(design 6.7 °C/)
  })
  it('when the design point lacks the value a rule needs, then the verdict is incomplete with the problem named', () => {
    const { designKwPerTon: _, ...withoutKwPerTon } = designPoint
    const r = evaluateField(field('specificPower'), null, { ...ip, designPoint: withoutKwPerTon, readings: { chwFlow: { value: 1200, unit: 'gpm' }, chwEntering: { value: 54, unit: 'degF' }, chwLeaving: { value: 44, unit: 'degF' }, inputKw: { value: 288, unit: 'kW' } } })
    expect(r.verdict).toBe('incomplete')
    expect(r.problem?.code).toBe('MISSING_DESIGN_VALUE')
  })
})

describe('evaluateField on nominal rules', () => {
  const nominal: ChecklistField = { id: 'freq', label: 'Frequency', kind: 'number', quantity: 'frequency', unit: 'Hz', required: true, rule: { type: 'nominal', nominal: 60, tolerance: 0.5, warnTolerance: 0.2 } }
  const pct: ChecklistField = { id: 'volts', label: 'Voltage', kind: 'number', quantity: 'voltage', unit: 'V', required: true, rule: { type: 'nominal_pct', nominal: 460, tolerancePct: 10 } }
  it.each([
    [nominal, 60.1, 'Hz', 'pass'],
    [nominal, 60.3, 'Hz', 'marginal'],
    [nominal, 59.4, 'Hz', 'fail'],
    [pct, 414, 'V', 'pass'],
    [pct, 506, 'V', 'pass'],
    [pct, 507, 'V', 'fail'],
  ] as const)('when %#: %d %s is entered, then the verdict is %s', (f, value, unit, verdict) => {
    expect(evaluateField(f, { value, unit }, ip).verdict).toBe(verdict)
  })
  it('when a nominal rule is judged, then its basis names the nominal and tolerance', () => {
    expect(evaluateField(nominal, { value: 59.4, unit: 'Hz' }, ip).message).toBe('Frequency 59.4 Hz is below the minimum 59.5 Hz (nominal 60 Hz ± 0.5 Hz)')
  })
})

describe('evaluateField on computed fields', () => {
  const readings: Record<string, FieldEntry> = {
    chwFlow: { value: 1200, unit: 'gpm' },
    chwEntering: { value: 54, unit: 'degF' },
    chwLeaving: { value: 42, unit: 'degF' },
    suction: { value: 35, unit: 'psig' },
    voltsAB: { value: 460, unit: 'V' },
    voltsBC: { value: 467, unit: 'V' },
    voltsCA: { value: 450, unit: 'V' },
    inputKw: { value: 345.6, unit: 'kW' },
  }
  it('when flow and temperatures are recorded, then capacity is computed with the 500 rule (1200 gpm × 12 °F / 24 = 600 tons)', () => {
    const r = evaluateField(field('capacity'), undefined, { ...ip, readings })
    expect(r.computed).toBe(true)
    expect(r.display?.value).toBeCloseTo(600, 9) // REFERENCES.md §1, tons = gpm × ΔT / 24 [S]
    expect(r.canonical?.value).toBeCloseTo(600 * 3516.852842, 3)
    expect(r.verdict).toBe('pass')
  })
  it('when the evaporator approach uses the design refrigerant, then it is 2.05 °F and passes below the 2.5 °F warning level', () => {
    const r = evaluateField(field('evapApproach'), undefined, { ...ip, readings })
    expect(r.display?.value).toBeCloseTo(2.05, 2) // REFERENCES.md §5 table [C]
    expect(r.verdict).toBe('pass')
  })
  it('when the voltages are the NEMA MG 1 example, then unbalance is 1.96 % and marginal above the 1 % warning', () => {
    const r = evaluateField(field('voltageUnbalance'), undefined, { ...ip, readings })
    expect(r.display?.value).toBeCloseTo(1.961, 3) // REFERENCES.md §3, NEMA MG 1 worked example [S]
    expect(r.verdict).toBe('marginal')
  })
  it('when kW/ton reads a computed capacity, then the chain is evaluated (345.6 kW / 600 tons = 0.576)', () => {
    const r = evaluateField(field('specificPower'), undefined, { ...ip, readings })
    expect(r.display?.value).toBeCloseTo(0.576, 9)
    expect(r.verdict).toBe('pass')
  })
  it('when an input is missing, then the verdict is incomplete and names what to record', () => {
    const { voltsBC: _, ...partial } = readings
    const r = evaluateField(field('voltageUnbalance'), undefined, { ...ip, readings: partial })
    expect(r.verdict).toBe('incomplete')
    expect(r.message).toBe('Voltage unbalance cannot be computed until Voltage B–C is recorded')
  })
  it('when the capacity is zero, then kW/ton is incomplete with the ZERO_DIVISOR problem, not NaN', () => {
    const r = evaluateField(field('specificPower'), undefined, { ...ip, readings: { ...readings, chwLeaving: { value: 54, unit: 'degF' } } })
    expect(r.verdict).toBe('incomplete')
    expect(r.problem?.code).toBe('ZERO_DIVISOR')
    expect(r.canonical).toBeNull()
  })
  it('when a computed field is evaluated without the definition, then MISSING_CONTEXT is thrown', () => {
    expect(() => evaluateField(field('capacity'), undefined, { unitSystem: 'IP', readings })).toThrow(expect.objectContaining({ code: 'MISSING_CONTEXT' }))
  })
})

describe('evaluateField on other kinds', () => {
  it.each([
    ['rotation', { value: true }, 'pass', 'Rotation correct: Yes'],
    ['rotation', { value: false }, 'fail', 'Rotation correct: No; Yes is required'],
    ['starterType', { value: 'solid_state' }, 'pass', 'Starter type: Solid-state'],
    ['starterType', { value: 'wye_delta' }, 'marginal', 'Starter type: Wye-delta is acceptable with reservations'],
    ['starterType', { value: 'across_line' }, 'fail', 'Starter type: Across-the-line is not acceptable (acceptable: Solid-state)'],
    // Free text and photos have no acceptance criterion: recorded, never a pass.
    ['remarks', { value: 'Strainers cleaned' }, 'recorded', 'Remarks recorded'],
    ['remarks', null, 'incomplete', 'Remarks was not recorded (optional)'],
    ['nameplatePhoto', { value: ['a1', 'a2'] }, 'recorded', 'Nameplate photo: 2 photos attached'],
    ['nameplatePhoto', { value: [] }, 'incomplete', 'Nameplate photo has not been recorded'],
    ['oilPressure', undefined, 'incomplete', 'Oil pressure has not been recorded'],
    ['softStart', { value: 4.2, unit: 's' }, 'pass', 'Start to full speed 4.2 s is within 3 to 8 s'],
    ['softStart', { value: 0.2, unit: 'min' }, 'fail', 'Start to full speed 12 s is above the maximum 8 s'],
  ] as const)('when %s gets %j, then the verdict is %s', (id, entry, verdict, message) => {
    const r = evaluateField(field(id), entry as FieldEntry | null | undefined, ip)
    expect(r.verdict).toBe(verdict)
    expect(r.message).toBe(message)
  })
  it('when an optional field is empty, then required is false so a summary can skip it', () => {
    expect(evaluateField(field('remarks'), null, ip).required).toBe(false)
  })
})

describe('evaluateField refuses bad entries with typed errors', () => {
  it.each([
    ['a non-finite value', 'oilPressure', { value: Number.NaN, unit: 'psid' }, 'NON_FINITE'],
    ['a gauge unit on a differential field', 'oilPressure', { value: 30, unit: 'psig' }, 'UNIT_MISMATCH'],
    ['a flow unit on a pressure field', 'oilPressure', { value: 30, unit: 'gpm' }, 'UNIT_MISMATCH'],
    ['a choice the field does not have', 'starterType', { value: 'magnetic' }, 'INVALID_ENTRY'],
    ['a string for a yes/no', 'rotation', { value: 'yes' }, 'INVALID_ENTRY'],
    ['a series whose times go backwards', 'oilRamp', { value: [[0, 0], [5, 10], [4, 20]], unit: 'psid' }, 'INVALID_SERIES'],
  ] as const)('when given %s, then an EngineeringError is thrown', (_n, id, entry, code) => {
    expect(() => evaluateField(field(id), entry as unknown as FieldEntry, ip)).toThrow(expect.objectContaining({ code }))
  })
})

describe('time-series judgement: oil-pressure ramp', () => {
  // Pre-lubrication first, drive only after oil pressure is proven and a hold of about 20 s: REFERENCES.md §7 [CP]
  const rule = { setpoint: 35, reachWithinS: 30, holdS: 20, floor: 25, warnFloor: 30 }
  it.each([
    ['a dip between the floor and the warning level after the start', [[0, 0], [10, 20], [15, 35], [40, 38], [45, 28], [60, 36]], 40, 'marginal', 15, 25, 28],
    ['a dip that stays above the warning level', [[0, 0], [10, 20], [15, 35], [40, 38], [45, 34.5], [60, 36]], 38, 'pass', 15, 23, 34.5],
    ['a steady ramp', [[0, 0], [10, 40], [40, 40], [60, 39]], 35, 'pass', 8.75, 26.25, 35],
    ['a late ramp', [[0, 0], [30, 20], [40, 36], [80, 36]], 70, 'fail', 39.375, 30.625, 35],
    ['a short hold', [[0, 0], [10, 36], [25, 36]], 20, 'fail', 9.722, 10.278, 35],
    ['a dip below the floor', [[0, 0], [10, 40], [40, 40], [45, 20], [50, 40]], 40, 'fail', 8.75, 31.25, 20],
    ['a ramp that never gets there', [[0, 0], [20, 30], [60, 33]], 50, 'fail', null, 0, null],
  ] as const)('when the series is %s, then verdict, time to setpoint, hold and minimum are as worked out', (_n, points, driveStartS, verdict, reach, hold, min) => {
    const j = judgeRamp(points as unknown as Array<[number, number]>, rule, { driveStartS })
    expect(j.verdict).toBe(verdict)
    if (reach === null) expect(j.timeToSetpointS).toBeNull()
    else expect(j.timeToSetpointS).toBeCloseTo(reach, 3)
    expect(j.holdAchievedS).toBeCloseTo(hold, 3)
    if (min === null) expect(j.minimumAfterSetpoint).toBeNull()
    else expect(j.minimumAfterSetpoint).toBeCloseTo(min, 9)
  })
  it('when pressure falls below setpoint before the drive start, then the hold restarts from the recovery', () => {
    const j = judgeRamp([[0, 0], [10, 40], [20, 30], [25, 40], [50, 40]], { setpoint: 35, reachWithinS: 30, holdS: 20 }, { driveStartS: 50 })
    expect(j.holdAchievedS).toBeCloseTo(50 - 22.5, 9)
    expect(j.verdict).toBe('pass')
  })
  it('when evaluated as a field in an SI project, then the message is in kPa and names each finding', () => {
    const r = evaluateField(field('oilRamp'), { value: [[0, 0], [10, 40], [40, 40], [60, 39]], unit: 'psid', driveStartS: 35 }, si)
    expect(r.verdict).toBe('pass')
    expect(r.message).toBe('Oil pressure reached the setpoint 241 kPa (diff) in 8.8 s, held it 26.3 s before the drive started and never fell below 241 kPa (diff) after reaching it')
    expect(r.series?.unit).toBe('kPad')
  })
  describe('when the setpoint comes from the design point (setpointKey), then the floors follow the machine in either unit system', () => {
    // Oil proven before the drive starts, floors as percentages below the machine's own setpoint: docs/REFERENCES.md, start sequence [CP]
    const designRamp: ChecklistField = { ...field('oilRamp'), rule: { type: 'ramp', setpointKey: 'oilPressureSetpoint', reachWithinS: 30, holdS: 20, floorBelowPct: 30, warnFloorBelowPct: 15 } }
    const siMachine = { unitSystem: 'SI' as const, definition, designPoint: { ...designPoint, oilPressureSetpoint: { value: 170, unit: 'kPad' } } }
    it('an SI machine running exactly at its 170 kPa setpoint passes (the fixed 241 kPa rule failed it)', () => {
      // 170 kPa steady from 8 s, drive at 35 s: setpoint reached, hold 27 s, minimum 170 ≥ floor 119 (170 × 0.70)
      const r = evaluateField(designRamp, { value: [[0, 0], [8, 170], [60, 170]], unit: 'kPad', driveStartS: 35 }, siMachine)
      expect(r.verdict).toBe('pass')
      expect(r.limits?.display.min).toBeCloseTo(119, 9)
      expect(r.limits?.display.warnMin).toBeCloseTo(144.5, 9)
      expect(r.limits?.basis).toContain('oil pressure setpoint')
    })
    it('an SI machine that dips to 140 kPa is marginal (below 144.5, above 119), and to 110 kPa fails', () => {
      expect(evaluateField(designRamp, { value: [[0, 0], [8, 170], [40, 170], [45, 140], [60, 170]], unit: 'kPad', driveStartS: 35 }, siMachine).verdict).toBe('marginal')
      expect(evaluateField(designRamp, { value: [[0, 0], [8, 170], [40, 170], [45, 110], [60, 170]], unit: 'kPad', driveStartS: 35 }, siMachine).verdict).toBe('fail')
    })
    it('an I-P machine with a 35 psid setpoint: floor 24.5 psid, marginal below 29.75 psid', () => {
      const ipMachine = { ...siMachine, unitSystem: 'IP' as const, designPoint: { ...designPoint, oilPressureSetpoint: { value: 35, unit: 'psid' } } }
      const r = evaluateField(designRamp, { value: [[0, 0], [10, 40], [40, 40], [45, 28], [60, 36]], unit: 'psid', driveStartS: 40 }, ipMachine)
      expect(r.verdict).toBe('marginal')
      expect(r.limits?.display.min).toBeCloseTo(24.5, 9)
      expect(r.limits?.display.warnMin).toBeCloseTo(29.75, 9)
    })
    it('a design point without the setpoint leaves the ramp incomplete, naming the missing value', () => {
      const { oilPressureSetpoint: _drop, ...without } = designPoint as Record<string, unknown>
      const r = evaluateField(designRamp, { value: [[0, 0], [8, 170], [60, 170]], unit: 'kPad', driveStartS: 35 }, { ...siMachine, designPoint: without as typeof designPoint })
      expect(r.verdict).toBe('incomplete')
      expect(r.problem?.code).toBe('MISSING_DESIGN_VALUE')
    })
  })
  it('when a soft-starter ramp of motor speed must reach 100 % between 3 and 8 s, then the same machinery judges it', () => {
    // Soft starters reach full speed in a few seconds (3.5–5 s quoted): REFERENCES.md §7 [CP]
    const speed = [[0, 0], [2, 40], [4, 90], [4.5, 100], [10, 100]] as Array<[number, number]>
    expect(judgeRamp(speed, { setpoint: 100, reachWithinS: 8, reachNotBeforeS: 3 }).verdict).toBe('pass')
    expect(judgeRamp(speed, { setpoint: 100, reachWithinS: 4 }).verdict).toBe('fail')
    expect(judgeRamp(speed, { setpoint: 100, reachWithinS: 8, reachNotBeforeS: 5 }).verdict).toBe('fail')
  })
})

describe('interval judgement: pre-lubrication and start-to-full-speed windows', () => {
  it.each([
    [0, 4.2, { min: 3, max: 8 }, 'pass', 'Start to full speed took 4.2 s, within 3 to 8 s'],
    [0, 2.5, { min: 3, max: 8 }, 'fail', 'Start to full speed took 2.5 s, shorter than the minimum 3 s'],
    [10, 19.5, { min: 3, max: 8 }, 'fail', 'Start to full speed took 9.5 s, longer than the maximum 8 s'],
    [0, 7.5, { min: 3, max: 8, warnMax: 7 }, 'marginal', 'Start to full speed took 7.5 s, within limits but longer than the warning level 7 s'],
  ] as const)('when the interval runs %d → %d s against %j, then it is %s', (start, end, window, verdict, message) => {
    const j = judgeInterval(start, end, window, 'Start to full speed')
    expect(j.verdict).toBe(verdict)
    expect(j.message).toBe(message)
  })
  it('when the end comes before the start, then INVALID_SERIES is thrown', () => {
    expect(() => judgeInterval(10, 5, { min: 3 })).toThrow(EngineeringError)
  })
})

describe('property: the warning band is never a failure', () => {
  it('when a value lies inside the marginal band of any range, then the verdict is marginal, never fail', () => {
    fc.assert(
      fc.property(
        fc.double({ min: -1e4, max: 1e4, noNaN: true }),
        fc.double({ min: 0.01, max: 1e3, noNaN: true }),
        fc.double({ min: 0.01, max: 1e3, noNaN: true }),
        fc.double({ min: 0, max: 1, noNaN: true }),
        (min, band, span, t) => {
          const warnMin = min + band
          const max = warnMin + span
          const value = min + t * band
          const verdict = classify(value, { min, warnMin, max }).verdict
          expect(verdict).not.toBe('fail')
        },
      ),
    )
  })
  it('when any oil pressure between the limits is entered as a field, then it is never fail', () => {
    fc.assert(
      fc.property(fc.double({ min: 25, max: 60, noNaN: true }), fc.constantFrom('psid', 'kPad', 'ftH2O'), (psid, unit) => {
        const value = unit === 'psid' ? psid : unit === 'kPad' ? psid * 6.894757293168361 : psid * (6894.757293168361 / 2989.067)
        expect(evaluateField(field('oilPressure'), { value, unit }, ip).verdict).not.toBe('fail')
      }),
    )
  })
})

describe('verdict summary and expressions', () => {
  it.each([
    [['pass', 'marginal'], 'marginal'],
    [['pass', 'incomplete', 'marginal'], 'incomplete'],
    [['incomplete', 'fail'], 'fail'],
    [[], 'pass'],
  ] as const)('when the verdicts are %j, then the worst is %s', (list, worst) => expect(worstVerdict(list)).toBe(worst))

  it.each(['a = 1', 'f(x) = x', 'import("x")', 'evaluate("1")', 'x to cm', 'x[1]', 'a ? b : c', 'design', 'constructor.name', 'true'])(
    'when an expression is "%s", then it is refused before anything runs',
    (source) => expect(() => parseExpression(source)).toThrow(expect.objectContaining({ code: 'INVALID_EXPRESSION' })),
  )
  it('when a checklist is evaluated, then every field gets a verdict', () => {
    const all = evaluateChecklist(definition, { unitSystem: 'IP', designPoint, readings: { oilPressure: { value: 32, unit: 'psid' } } })
    expect(Object.keys(all).length).toBe(19)
    expect(all.oilPressure.verdict).toBe('pass')
    expect(all.capacity.verdict).toBe('incomplete')
  })
})

describe('a value is judged and worded in the field’s own unit (docs/REFERENCES.md §Units, conversions and printed digits)', () => {
  const hours = { id: 'oilHeaterHours', label: 'Oil heater on', kind: 'number', quantity: 'time', unit: 'h', required: true, rule: { type: 'range', min: 12, warnMin: 24 } } as const
  const drop = { id: 'chwPressureDrop', label: 'Evaporator water pressure drop', kind: 'number', quantity: 'pressure_differential', unit: 'ftH2O', required: true, rule: { type: 'range', max: 25 } } as const
  it('when an hours field is judged, then it says hours in an I-P and in an SI project', () => {
    for (const unitSystem of ['IP', 'SI'] as const) {
      const r = evaluateField(hours, { value: 18, unit: 'h' }, { unitSystem })
      expect(r.verdict).toBe('marginal')
      expect(r.message).toBe('Oil heater on 18 h is within limits but below the warning level 24 h (minimum 12 h)')
    }
  })
  it('when a pressure drop is typed in feet of water in an I-P project, then it is judged and worded in feet of water', () => {
    const r = evaluateField(drop, { value: 22.4, unit: 'ftH2O' }, { unitSystem: 'IP' })
    expect(r.display?.unit).toBe('ftH2O')
    expect(r.message).toMatch(/^Evaporator water pressure drop 22\.4 ft/)
  })
})
