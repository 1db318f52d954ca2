import { readFileSync } from 'node:fs'
import { describe, expect, it } from 'vitest'
import { SATURATION_PRESSURE_KPA_ABS, SATURATION_TEMPERATURE_F } from '../../shared/data/refrigerant-saturation'
import { checklistDefinitionSchema, validateChecklistDefinition } from '../../shared/schemas/checklist'
import {
  DESIGN_POINT_KEYS,
  DESIGN_POINT_LABELS,
  DESIGN_POINT_QUANTITIES,
  EQUIPMENT_KIND_LABELS,
  EQUIPMENT_KINDS,
  designPointFormFor,
  designPointKeysFor,
  designPointSchema,
  designPointSchemaFor,
  isEquipmentKind,
  pumpDesignPointSchema,
  type EquipmentKind,
  type PumpDesignPoint,
} from '../../shared/schemas/design-point'
import { isUnitOf } from '../../shared/units'
import { entrySchemaFor, readingSchema } from '../../shared/schemas/reading'
import { definition, designPoint, field } from './fixtures'

const clone = <T>(v: T): T => structuredClone(v)
type Mutable = { sections: Array<{ id: string; steps: Array<{ id: string; fields: Array<Record<string, unknown>> }> }> }

async function errorsOf(mutate: (d: Mutable) => void) {
  const d = clone(definition) as unknown as Mutable
  mutate(d)
  const result = await validateChecklistDefinition(d)
  expect(result.valid).toBe(false)
  return result.errors
}

describe('checklist definition schema', () => {
  it('when the start-up checklist is valid, then it passes with no errors', async () => {
    const result = await validateChecklistDefinition(definition)
    expect(result.errors).toEqual([])
    expect(result.valid).toBe(true)
  })
  it('when the definition is validated synchronously (server middleware), then it gives the same answer', () => {
    expect(() => checklistDefinitionSchema.validateSync(definition, { abortEarly: false })).not.toThrow()
  })

  const cases: Array<[string, string, (d: Mutable) => void, RegExp]> = [
    ['a range whose max is below its min', 'sections[2].steps[0].fields[1].rule.max', (d) => (d.sections[2].steps[0].fields[1].rule = { type: 'range', min: 25, max: 20 }), /must not be below min/],
    ['a warning level outside the limits', 'sections[2].steps[0].fields[1].rule.warnMin', (d) => (d.sections[2].steps[0].fields[1].rule = { type: 'range', min: 25, warnMin: 20 }), /inside the limits/],
    ['a non-numeric limit', 'sections[2].steps[0].fields[1].rule.max', (d) => (d.sections[2].steps[0].fields[1].rule = { type: 'range', max: 'sixty' }), /must be a number/],
    ['an unknown rule type', 'sections[0].steps[0].fields[0].rule.type', (d) => (d.sections[0].steps[0].fields[0].rule = { type: 'roughly' }), /must be one of/],
    ['a duplicate field id', 'sections[1].steps[0].fields[4].id', (d) => (d.sections[1].steps[0].fields[4].id = 'chwFlow'), /duplicate field id "chwFlow"/],
    ['a computed field referring to an unknown field', 'sections[1].steps[0].fields[5].computed.expression', (d) => (d.sections[1].steps[0].fields[5].computed = { expression: 'kwPerTon(inputPower, capacity)' }), /unknown field "inputPower"/],
    ['a computed field referring to an unknown design value', 'sections[0].steps[0].fields[4].computed.expression', (d) => (d.sections[0].steps[0].fields[4].computed = { expression: 'chwFlow / design.ratedFlow' }), /unknown design value "design.ratedFlow"/],
    ['a design rule naming an unknown design value', 'sections[0].steps[0].fields[0].rule.key', (d) => (d.sections[0].steps[0].fields[0].rule = { type: 'design', key: 'pumpFlow', lowerPct: 10 }), /is not a design-point value/],
    ['a design rule of another quantity', 'sections[0].steps[0].fields[0].rule.key', (d) => (d.sections[0].steps[0].fields[0].rule = { type: 'design', key: 'capacity', lowerPct: 10 }), /cooling_capacity value but the field measures volumetric_flow/],
    ['an expression using eval-like constructs', 'sections[0].steps[0].fields[4].computed.expression', (d) => (d.sections[0].steps[0].fields[4].computed = { expression: 'f(x) = 1' }), /not allowed/],
    ['a circular computation', 'sections[0].steps[0].fields[4].computed.expression', (d) => {
      d.sections[0].steps[0].fields[4].computed = { expression: 'specificPower * 2' }
    }, /circular computation/],
    ['a unit that does not measure the quantity', 'sections[2].steps[0].fields[1].unit', (d) => (d.sections[2].steps[0].fields[1].unit = 'psig'), /does not measure pressure_differential/],
    ['a measured field without a quantity', 'sections[0].steps[0].fields[1].quantity', (d) => delete d.sections[0].steps[0].fields[1].quantity, /required/],
    ['a percent rule on a temperature', 'sections[0].steps[0].fields[2].rule.type', (d) => (d.sections[0].steps[0].fields[2].rule = { type: 'nominal_pct', nominal: 44, tolerancePct: 2 }), /percent of a temperature/],
    ['a rule that does not fit the field kind', 'sections[2].steps[0].fields[3].rule.type', (d) => (d.sections[2].steps[0].fields[3].rule = { type: 'range', min: 1 }), /does not apply to a yes_no field/],
    ['a choice rule naming a missing choice', 'sections[2].steps[0].fields[4].rule.pass[0]', (d) => (d.sections[2].steps[0].fields[4].rule = { type: 'choice', pass: ['vfd'] }), /not one of the field's choices/],
    ['a ramp whose floor is above the setpoint', 'sections[2].steps[0].fields[0].rule.floor', (d) => (d.sections[2].steps[0].fields[0].rule = { type: 'ramp', setpoint: 35, reachWithinS: 30, floor: 40 }), /not be above the setpoint/],
    ['a field id that is not an identifier', 'sections[0].steps[0].fields[1].id', (d) => (d.sections[0].steps[0].fields[1].id = 'entering-water'), /start with a letter/],
    ['an unknown key on a field', 'sections[0].steps[0].fields[1]', (d) => (d.sections[0].steps[0].fields[1].colour = 'red'), /unknown keys: colour/],
    ['an empty step', 'sections[1].steps[0].fields', (d) => (d.sections[1].steps[0].fields = []), /at least one field/],
  ]
  it.each(cases)('when the definition has %s, then the error names the path %s', async (_n, path, mutate, message) => {
    const errors = await errorsOf(mutate)
    const hit = errors.find((e) => e.path === path)
    expect(hit, JSON.stringify(errors)).toBeDefined()
    expect(hit!.message).toMatch(message)
  })
  it('when several things are wrong at once, then every one is reported', async () => {
    const errors = await errorsOf((d) => {
      d.sections[2].steps[0].fields[1].rule = { type: 'range', min: 25, max: 20 }
      d.sections[1].steps[0].fields[4].id = 'chwFlow'
    })
    expect(errors.map((e) => e.path)).toEqual(expect.arrayContaining(['sections[2].steps[0].fields[1].rule.max', 'sections[1].steps[0].fields[4].id']))
  })
})

describe('design point schema', () => {
  it('when the design point is complete, then it validates', () => {
    expect(designPointSchema.validateSync(designPoint)).toEqual(designPoint)
  })
  it.each([
    ['an unknown refrigerant', { refrigerant: 'R-22' }, 'refrigerant'],
    ['zero capacity', { capacity: { value: 0, unit: 'TR' } }, 'capacity.value'],
    ['a capacity in psig', { capacity: { value: 500, unit: 'psig' } }, 'capacity.unit'],
    ['a negative flow', { evaporatorWaterFlow: { value: -5, unit: 'gpm' } }, 'evaporatorWaterFlow.value'],
    ['an infinite voltage', { voltage: { value: Infinity, unit: 'V' } }, 'voltage.value'],
    ['leaving water warmer than entering in the evaporator', { evaporatorLeavingWaterTemp: { value: 56, unit: 'degF' } }, 'evaporatorLeavingWaterTemp.value'],
    ['condenser leaving colder than entering', { condenserLeavingWaterTemp: { value: 80, unit: 'degF' } }, 'condenserLeavingWaterTemp.value'],
  ])('when the design point has %s, then the error names %s', (_n, patch, path) => {
    let caught: { inner: Array<{ path?: string }> } | undefined
    try {
      designPointSchema.validateSync({ ...designPoint, ...patch }, { abortEarly: false })
    } catch (err) {
      caught = err as typeof caught
    }
    expect(caught?.inner.map((e) => e.path)).toContain(path)
  })
})

// An invented 1500 gpm condenser-water pump for the 500-ton machine of the fixtures (3.0 gpm/ton, AHRI 550/590 [S]),
// 65 ft of head, 40 hp four-pole motor at 460 V / 60 Hz (synchronous 1800 rpm, rated 1780 rpm).
const pumpDesignPoint: PumpDesignPoint = {
  pumpService: 'condenser_water',
  pumpDesignFlow: { value: 1500, unit: 'gpm' },
  pumpDesignHead: { value: 65, unit: 'ftH2O' },
  motorRatedPower: { value: 40, unit: 'hp' },
  motorRatedSpeed: { value: 1780, unit: 'rpm' },
  voltage: { value: 460, unit: 'V' },
  frequency: { value: 60, unit: 'Hz' },
  fullLoadAmps: { value: 48, unit: 'A' },
}

function pathsOf(schema: { validateSync(v: unknown, o: object): unknown }, value: unknown): string[] {
  try {
    schema.validateSync(value, { abortEarly: false })
    return []
  } catch (err) {
    return (err as { inner: Array<{ path?: string }> }).inner.map((e) => e.path ?? '')
  }
}

describe('equipment kinds and their design points', () => {
  it('when the kinds are listed, then there are the chiller and the pump with plain-English labels', () => {
    expect(EQUIPMENT_KINDS).toEqual(['centrifugal_chiller', 'pump'])
    expect(EQUIPMENT_KIND_LABELS).toEqual({ centrifugal_chiller: 'Water-cooled centrifugal chiller', pump: 'Pump (chilled or condenser water)' })
    expect(isEquipmentKind('pump')).toBe(true)
    expect(isEquipmentKind('cooling_tower')).toBe(false)
  })
  it('when the schema for each kind is asked for, then the chiller gets the existing schema and the pump its own', () => {
    expect(designPointSchemaFor('centrifugal_chiller')).toBe(designPointSchema)
    expect(designPointSchemaFor('pump')).toBe(pumpDesignPointSchema)
    expect(() => designPointSchemaFor('boiler' as EquipmentKind)).toThrow(/Unknown equipment kind/)
  })
  it('when the pump design point is complete, then it validates; the chiller schema refuses it and the pump schema refuses a chiller one', () => {
    expect(pumpDesignPointSchema.validateSync(pumpDesignPoint)).toEqual(pumpDesignPoint)
    expect(pathsOf(designPointSchema, pumpDesignPoint)).toContain('refrigerant')
    expect(pathsOf(pumpDesignPointSchema, designPoint)).toEqual(expect.arrayContaining(['pumpDesignFlow', 'pumpDesignHead']))
  })
  it('when the pump head is given in kPa, then it is accepted (ft of water and kPa both measure differential pressure)', () => {
    expect(pathsOf(pumpDesignPointSchema, { ...pumpDesignPoint, pumpDesignHead: { value: 194.3, unit: 'kPad' } })).toEqual([])
  })
  it.each([
    ['no design flow', { pumpDesignFlow: undefined }, 'pumpDesignFlow'],
    ['a head in psig (a gauge pressure, not a head)', { pumpDesignHead: { value: 28, unit: 'psig' } }, 'pumpDesignHead.unit'],
    ['zero head', { pumpDesignHead: { value: 0, unit: 'ftH2O' } }, 'pumpDesignHead.value'],
    ['a speed in Hz', { motorRatedSpeed: { value: 30, unit: 'Hz' } }, 'motorRatedSpeed.unit'],
    ['a rated speed above the two-pole synchronous speed (3600 rpm at 60 Hz)', { motorRatedSpeed: { value: 3650, unit: 'rpm' } }, 'motorRatedSpeed.value'],
    ['an unknown service', { pumpService: 'hot_water' }, 'pumpService'],
    ['a refrigerant, which a pump does not have', { refrigerant: 'R-134a' }, ''],
  ])('when the pump design point has %s, then the error names %s', (_n, patch, path) => {
    expect(pathsOf(pumpDesignPointSchema, { ...pumpDesignPoint, ...patch })).toContain(path)
  })
  it('when a 3550 rpm two-pole motor is rated at 60 Hz, then it is accepted; at 50 Hz (3000 rpm synchronous) it is refused', () => {
    // Synchronous speed 120 · f / poles (NEMA MG 1 definitions) [S]
    expect(pathsOf(pumpDesignPointSchema, { ...pumpDesignPoint, motorRatedSpeed: { value: 3550, unit: 'rpm' } })).toEqual([])
    expect(pathsOf(pumpDesignPointSchema, { ...pumpDesignPoint, motorRatedSpeed: { value: 3550, unit: 'rpm' }, frequency: { value: 50, unit: 'Hz' } })).toContain('motorRatedSpeed.value')
  })
  it('when the chiller has an allowed setpoint range, then it must run upwards', () => {
    const range = { chilledWaterSetpointMin: { value: 40, unit: 'degF' }, chilledWaterSetpointMax: { value: 55, unit: 'degF' } }
    expect(pathsOf(designPointSchema, { ...designPoint, ...range })).toEqual([])
    expect(pathsOf(designPointSchema, { ...designPoint, ...range, chilledWaterSetpointMax: { value: 4, unit: 'degC' } })).toContain('chilledWaterSetpointMax.value')
  })

  it('when every numeric design key is checked, then it has a label and belongs to at least one kind', () => {
    const used = new Set(EQUIPMENT_KINDS.flatMap((k) => designPointKeysFor(k)))
    for (const key of DESIGN_POINT_KEYS) {
      expect(DESIGN_POINT_LABELS[key], key).toMatch(/^[A-Z]/)
      expect(used.has(key), key).toBe(true)
    }
  })
  it.each(EQUIPMENT_KINDS.map((k) => [k]))('when the %s form is built, then it lists exactly the schema keys with the schema\'s required flags', (kind) => {
    const described = designPointSchemaFor(kind).describe().fields as Record<string, { optional: boolean }>
    const form = designPointFormFor(kind)
    expect(form.map((f) => f.key).sort()).toEqual(Object.keys(described).sort())
    for (const f of form) {
      expect(f.required, f.key).toBe(!described[f.key].optional)
      expect(f.label).toBe(DESIGN_POINT_LABELS[f.key])
      if (f.quantity) expect(f.quantity).toBe(DESIGN_POINT_QUANTITIES[f.key as keyof typeof DESIGN_POINT_QUANTITIES])
    }
    expect(designPointKeysFor(kind)).toEqual(form.map((f) => f.key))
  })
  it('when the pump keys are listed, then head is a differential pressure accepting ft of water and kPa, and speed is in rpm', () => {
    expect(DESIGN_POINT_QUANTITIES.pumpDesignHead).toBe('pressure_differential')
    expect(isUnitOf('pressure_differential', 'ftH2O') && isUnitOf('pressure_differential', 'kPad')).toBe(true)
    expect(DESIGN_POINT_QUANTITIES.motorRatedSpeed).toBe('rotational_speed')
    expect(isUnitOf('rotational_speed', 'rpm')).toBe(true)
    expect(designPointKeysFor('pump')).toEqual(['pumpService', 'pumpDesignFlow', 'pumpDesignHead', 'motorRatedPower', 'motorRatedSpeed', 'voltage', 'frequency', 'fullLoadAmps', 'variableSpeedDrive'])
  })
})

describe('reading schema', () => {
  it.each([
    [{ fieldId: 'oilPressure', entry: { value: 32, unit: 'psid' } }, true],
    [{ fieldId: 'rotation', entry: { value: true } }, true],
    [{ fieldId: 'oilRamp', entry: { value: [[0, 0], [10, 36]], unit: 'psid', driveStartS: 30 } }, true],
    [{ fieldId: 'oilPressure', entry: null }, true],
    [{ fieldId: 'oilPressure', entry: { value: 'high', unit: 'psid' } }, false],
    [{ fieldId: 'oilRamp', entry: { value: [[0, 0], [0, 36]], unit: 'psid' } }, false],
    [{ entry: { value: 1, unit: 'psid' } }, false],
  ])('when the reading is %j, then valid is %s', (reading, valid) => {
    expect(readingSchema.isValidSync(reading)).toBe(valid)
  })
  it.each([
    ['oilPressure', { value: 32, unit: 'kPad' }, true],
    ['oilPressure', { value: 32, unit: 'psig' }, false],
    ['starterType', { value: 'wye_delta' }, true],
    ['starterType', { value: 'magnetic' }, false],
    ['nameplatePhoto', { value: [] }, false],
    ['softStart', { value: 4, unit: 'min' }, true],
  ] as const)('when %s gets %j, then the field-specific schema says %s', (id, entry, valid) => {
    expect(entrySchemaFor(field(id)).isValidSync(entry)).toBe(valid)
  })
})

describe('shipped saturation data', () => {
  it('when the generated module is compared with the CSV, then every row and column agrees', () => {
    const lines = readFileSync(new URL('../../shared/data/refrigerant-saturation.csv', import.meta.url), 'utf8').trim().split(/\r?\n/).slice(1)
    expect(SATURATION_TEMPERATURE_F.length).toBe(lines.length)
    lines.forEach((line, i) => {
      const [f, , r134a, r1233, bubble, dew] = line.split(',').map(Number)
      expect(SATURATION_TEMPERATURE_F[i]).toBe(f)
      expect(SATURATION_PRESSURE_KPA_ABS['R-134a'][i]).toBe(r134a)
      expect(SATURATION_PRESSURE_KPA_ABS['R-1233zd(E)'][i]).toBe(r1233)
      expect(SATURATION_PRESSURE_KPA_ABS['R-513A bubble'][i]).toBe(bubble)
      expect(SATURATION_PRESSURE_KPA_ABS['R-513A dew'][i]).toBe(dew)
    })
  })
  it('when the shipped CSV is compared with the project reference copy, then they are identical', () => {
    const shipped = readFileSync(new URL('../../shared/data/refrigerant-saturation.csv', import.meta.url), 'utf8')
    expect(shipped.split(/\r?\n/)[0]).toBe('temperature_F,temperature_C,R134a_kPa_abs,R1233zdE_kPa_abs,R513A_bubble_kPa_abs,R513A_dew_kPa_abs')
    expect(shipped.trim().split(/\r?\n/).length).toBe(142)
  })
})
