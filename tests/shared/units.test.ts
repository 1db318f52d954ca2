import fc from 'fast-check'
import Qty from 'js-quantities'
import { unit as globalUnit } from 'mathjs'
import { describe, expect, it } from 'vitest'
import { EngineeringError } from '../../shared/engineering/errors'
import {
  absoluteToGauge,
  canonicalUnit,
  convert,
  convertDifference,
  displayUnit,
  formatQuantity,
  fromCanonical,
  gaugeToAbsolute,
  QUANTITY_KINDS,
  toCanonical,
  unitsOf,
  type QuantityKind,
} from '../../shared/units'

const rel = (actual: number, expected: number, tol: number) => expect(Math.abs(actual - expected)).toBeLessThanOrEqual(Math.abs(expected) * tol)

describe('unit conversions against NIST SP 811 factors', () => {
  // REFERENCES.md §1 and §6, NIST SP 811 (2008) App. B [S]
  const cases: Array<[string, number, string, string, QuantityKind, number]> = [
    ['1 psi is 6.894 757 kPa', 1, 'psid', 'kPad', 'pressure_differential', 6.894757],
    ['1 psig is 6.894 757 kPa gauge', 1, 'psig', 'kPag', 'pressure_gauge', 6.894757],
    ['1 gpm is 0.063 090 20 L/s', 1, 'gpm', 'Lps', 'volumetric_flow', 0.0630902],
    ['1 gpm is 0.227 124 7 m³/h', 1, 'gpm', 'm3ph', 'volumetric_flow', 0.2271247],
    ['1 ton of refrigeration is 3.516 853 kW', 1, 'TR', 'kW', 'cooling_capacity', 3.516853],
    ['1 ton of refrigeration is 12 000 Btu/h', 1, 'TR', 'BtuPerH', 'cooling_capacity', 12000],
    ['1 ft of water is 2.989 067 kPa', 1, 'ftH2O', 'kPad', 'pressure_differential', 2.989067],
    ['1 inHg is 3.386 39 kPa', 1, 'inHgAbs', 'kPaa', 'pressure_absolute', 3.38639],
    ['a 1 °F difference is 5/9 K', 1, 'deltaF', 'K', 'temperature_difference', 5 / 9],
    ['32 °F is 0 °C', 32, 'degF', 'degC', 'temperature', 0],
    ['212 °F is 100 °C', 212, 'degF', 'degC', 'temperature', 100],
    ['44 °F is 6.667 °C', 44, 'degF', 'degC', 'temperature', (44 - 32) / 1.8],
    ['0 °C is 273.15 K', 0, 'degC', 'K', 'temperature', 273.15],
    ['0.576 kW/ton is 0.1638 kW/kW', 0.576, 'kWPerTon', 'kWPerKW', 'specific_power', 0.576 / 3.516853],
    ['COP 1 is 3.412 Btu/(W·h)', 1, 'COP', 'EER', 'efficiency', 3.412142],
    ['1 r/min is 0.104 719 8 rad/s', 1, 'rpm', 'radps', 'rotational_speed', 0.1047198],
    ['1800 r/min is 30 r/s', 1800, 'rpm', 'rps', 'rotational_speed', 30],
    ['1 in/s is 25.4 mm/s (1 in = 0.0254 m exactly)', 1, 'inps', 'mmps', 'vibration_velocity', 25.4],
    ['0.15 in/s is 0.003 81 m/s', 0.15, 'inps', 'mps', 'vibration_velocity', 0.00381],
    ['1 mil is 0.0254 mm', 1, 'mil', 'mm', 'alignment_offset', 0.0254],
    ['1000 mils is 1 in', 1000, 'mil', 'in', 'alignment_offset', 1],
    ['1 mil/in is 1 mm/m', 1, 'milPerIn', 'mmPerM', 'alignment_angularity', 1],
    ['0.05 mm/100 mm is 0.5 mil/in', 0.05, 'mmPer100mm', 'milPerIn', 'alignment_angularity', 0.5],
  ]
  it.each(cases)('when converting %s, then mathjs agrees to 1e-6', (_name, value, from, to, kind, expected) => {
    if (expected === 0) expect(Math.abs(convert(value, from, to, kind))).toBeLessThan(1e-12)
    else rel(convert(value, from, to, kind), expected, 1e-6)
  })
})

describe('unit conversions cross-checked against js-quantities (a second, independent library)', () => {
  const cases: Array<[string, number, string, string, QuantityKind, string, string]> = [
    ['psi to kPa', 37.5, 'psid', 'kPad', 'pressure_differential', 'psi', 'kPa'],
    ['gpm to L/s', 1200, 'gpm', 'Lps', 'volumetric_flow', 'gal/min', 'L/s'],
    ['gpm to m³/h', 1200, 'gpm', 'm3ph', 'volumetric_flow', 'gal/min', 'm^3/h'],
    ['Btu/h to kW', 6000000, 'BtuPerH', 'kW', 'cooling_capacity', 'BTU/h', 'kW'],
    ['hp to kW', 400, 'hp', 'kW', 'power', 'hp', 'kW'],
    ['minutes to seconds', 2.5, 'min', 's', 'time', 'min', 's'],
    ['°F difference to K', 10, 'deltaF', 'K', 'temperature_difference', 'degF', 'degK'],
    ['bar to psi', 3, 'barg', 'psig', 'pressure_gauge', 'bar', 'psi'],
    ['rpm to rad/s', 1780, 'rpm', 'radps', 'rotational_speed', 'rpm', 'rad/s'],
    ['in/s to mm/s', 0.15, 'inps', 'mmps', 'vibration_velocity', 'in/s', 'mm/s'],
    ['mils to mm', 4, 'mil', 'mm', 'alignment_offset', 'mil', 'mm'],
  ]
  it.each(cases)('when converting %s, then both libraries agree to 1e-5', (_n, value, from, to, kind, qFrom, qTo) => {
    rel(convert(value, from, to, kind), Qty(value, qFrom).to(qTo).scalar, 1e-5)
  })

  it('when converting absolute temperatures, then js-quantities tempF/tempC agree (offsets applied)', () => {
    for (const f of [-40, 0, 32, 44, 54, 85, 94.3, 140]) rel(convert(f, 'degF', 'K', 'temperature'), Qty(f, 'tempF').to('tempK').scalar, 1e-9)
  })
})

describe('temperature and temperature difference are different kinds', () => {
  it('when a 10 °F difference is converted, then it is 5.556 K, not the absolute 260.9 K', () => {
    rel(convert(10, 'deltaF', 'K', 'temperature_difference'), 50 / 9, 1e-12) // REFERENCES.md §6 [S]
    rel(convert(10, 'degF', 'K', 'temperature'), 260.92778, 1e-6)
  })
  it('when a tolerance of a temperature is converted, then only the scale applies', () => {
    rel(convertDifference(1, 'degF', 'degC', 'temperature'), 5 / 9, 1e-12)
  })
  it('when a temperature unit is used for a temperature difference, then UNIT_MISMATCH is thrown', () => {
    expect(() => convert(1, 'degF', 'K', 'temperature_difference')).toThrow(expect.objectContaining({ code: 'UNIT_MISMATCH' }))
  })
})

describe('gauge, absolute and differential pressure', () => {
  it('when 0 psig is referred to the standard atmosphere, then it is 14.696 psia and 101.325 kPa (abs)', () => {
    rel(gaugeToAbsolute(0, 'psig', 'psia'), 14.696, 1e-5) // REFERENCES.md §5 [S]
    rel(gaugeToAbsolute(0, 'psig', 'kPaa'), 101.325, 1e-12)
  })
  it('when a vacuum of 10 inHg is read, then it is −4.91 psig and 67.46 kPa (abs)', () => {
    rel(convert(10, 'inHgVac', 'psig', 'pressure_gauge'), -33.86389 / 6.894757, 1e-6) // NIST SP 811 inHg and psi [S]
    rel(gaugeToAbsolute(10, 'inHgVac', 'kPaa'), 101.325 - 33.86389, 1e-6)
  })
  it('when gauge and absolute units are mixed inside one kind, then UNIT_MISMATCH is thrown', () => {
    expect(() => convert(1, 'psig', 'psia', 'pressure_gauge')).toThrow(EngineeringError)
    expect(() => convert(1, 'psia', 'psid', 'pressure_absolute')).toThrow(expect.objectContaining({ code: 'UNIT_MISMATCH' }))
  })
  it('when absolute converts to gauge, then it undoes gaugeToAbsolute', () => {
    rel(absoluteToGauge(gaugeToAbsolute(35, 'psig', 'kPaa'), 'kPaa', 'psig'), 35, 1e-12)
  })
})

describe('bad input', () => {
  const cases: Array<[string, () => unknown, string]> = [
    ['NaN', () => convert(Number.NaN, 'psig', 'kPag', 'pressure_gauge'), 'NON_FINITE'],
    ['Infinity', () => toCanonical(Infinity, 'gpm', 'volumetric_flow'), 'NON_FINITE'],
    ['a flow unit for a pressure', () => convert(1, 'gpm', 'psig', 'pressure_gauge'), 'UNIT_MISMATCH'],
    ['an unknown quantity kind', () => toCanonical(1, 'V', 'speed' as QuantityKind), 'UNKNOWN_QUANTITY_KIND'],
  ]
  it.each(cases)('when the value is %s, then a typed error is thrown', (_n, act, code) => {
    expect(act).toThrow(expect.objectContaining({ code }))
  })
})

describe('display and formatting', () => {
  it('when each kind asks for its I-P and SI display unit, then the unit measures that kind', () => {
    for (const kind of QUANTITY_KINDS) {
      for (const system of ['IP', 'SI'] as const) expect(unitsOf(kind).map((u) => u.id)).toContain(displayUnit(kind, system))
      expect(unitsOf(kind).map((u) => u.id)).toContain(canonicalUnit(kind))
    }
  })
  it.each([
    [18, 'psid', 'pressure_differential', '18 psid'],
    [44.04, 'degF', 'temperature', '44 °F'],
    [0.5764, 'kWPerTon', 'specific_power', '0.576 kW/ton'],
    [501.54, 'TR', 'cooling_capacity', '501.5 tons'],
    [-0.01, 'degF', 'temperature', '0 °F'],
    [1780, 'rpm', 'rotational_speed', '1780 rpm'],
    [0.1234, 'inps', 'vibration_velocity', '0.123 in/s'],
    [3.14, 'mmps', 'vibration_velocity', '3.14 mm/s'],
    [2.04, 'mil', 'alignment_offset', '2 mils'],
    [0.3, 'milPerIn', 'alignment_angularity', '0.3 mils/in'],
  ] as const)('when %d %s is formatted, then it reads "%s"', (value, unit, kind, text) => {
    expect(formatQuantity(value, unit, kind)).toBe(text)
  })
})

describe('units of our own table', () => {
  it('when the ton of refrigeration and mm/100 mm are converted by the table, then the global mathjs still does not know them', () => {
    expect(() => globalUnit(1, 'TR')).toThrow()
    expect(() => globalUnit(1, 'mmPer100mm')).toThrow()
  })
  it('when a vibration velocity is given in a length unit, then UNIT_MISMATCH is thrown (kinds never mix)', () => {
    expect(() => convert(1, 'mil', 'mmps', 'vibration_velocity')).toThrow(expect.objectContaining({ code: 'UNIT_MISMATCH' }))
    expect(() => convert(1, 'rpm', 'Hz', 'rotational_speed')).toThrow(expect.objectContaining({ code: 'UNIT_MISMATCH' }))
  })
})

describe('property: conversions round-trip', () => {
  const kinds = QUANTITY_KINDS.filter((k) => unitsOf(k).length > 1)
  it('when any value goes from one unit of a kind to another and back, then it returns unchanged', () => {
    fc.assert(
      fc.property(
        fc.constantFrom(...kinds),
        fc.double({ min: -1e6, max: 1e6, noNaN: true }),
        fc.nat(),
        fc.nat(),
        (kind, value, i, j) => {
          const units = unitsOf(kind)
          const a = units[i % units.length].id
          const b = units[j % units.length].id
          // A reciprocal unit (COP) takes positive values only: efficiency is never zero or negative.
          const v = units[i % units.length].reciprocal || units[j % units.length].reciprocal ? Math.abs(value) + 1e-3 : value
          const back = convert(convert(v, a, b, kind), b, a, kind)
          expect(Math.abs(back - v)).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(v)) + 1e-9)
        },
      ),
    )
  })
  it('when any value goes to canonical SI and back, then it returns unchanged', () => {
    fc.assert(
      fc.property(fc.constantFrom(...QUANTITY_KINDS), fc.double({ min: -1e5, max: 1e5, noNaN: true }), fc.nat(), (kind, value, i) => {
        const units = unitsOf(kind)
        const u = units[i % units.length].id
        const v = units[i % units.length].reciprocal ? Math.abs(value) + 1e-3 : value
        const back = fromCanonical(toCanonical(v, u, kind), u, kind)
        expect(Math.abs(back - v)).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(v)))
      }),
    )
  })
})

describe('COP: SI efficiency, the reciprocal of specific power', () => {
  // 1 ton of refrigeration = 12 000 Btu/h = 3.516 853 kW (NIST SP 811 (2008) App. B.8), so COP = 3.516 853 / (kW/ton)
  // (docs/REFERENCES.md §Units, conversions and printed digits).
  it('when 0.576 kW/ton is read as COP, then it is 3.516853 / 0.576 = 6.1056', () => {
    expect(convert(0.576, 'kWPerTon', 'COP', 'specific_power')).toBeCloseTo(6.10565, 4)
    expect(convert(6.10565, 'COP', 'kWPerTon', 'specific_power')).toBeCloseTo(0.576, 5)
    expect(convert(0.2, 'kWPerKW', 'COP', 'specific_power')).toBeCloseTo(5, 12)
  })
  it('when an SI project shows specific power, then its unit is COP', () => {
    expect(displayUnit('specific_power', 'SI')).toBe('COP')
    expect(displayUnit('specific_power', 'IP')).toBe('kWPerTon')
  })
  it('when zero or a negative value is converted to COP, then it is refused, and differences are refused', () => {
    expect(() => convert(0, 'kWPerTon', 'COP', 'specific_power')).toThrow(EngineeringError)
    expect(() => convert(-1, 'COP', 'kWPerTon', 'specific_power')).toThrow(EngineeringError)
    expect(() => convertDifference(0.1, 'kWPerTon', 'COP', 'specific_power')).toThrow(EngineeringError)
  })
})
