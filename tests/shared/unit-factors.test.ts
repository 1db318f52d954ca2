import { all, create } from 'mathjs'
import { describe, expect, it } from 'vitest'
import { STARTER_LIBRARY } from '../../shared/library'
import { EXPRESSION_FUNCTIONS, parseExpression } from '../../shared/rules/expression'
import { convert, QUANTITY_KINDS, unitsOf, type QuantityKind } from '../../shared/units'

// The conversion table (shared/units/factors.ts, NIST SP 811 (2008) App. B.8 via docs/REFERENCES.md §Units, conversions
// and printed digits) replaced the full mathjs unit system in shared/. This keeps the two in step: every unit of every
// quantity kind, converted to every other unit of its kind, agrees with full mathjs, which the tests may still load.
const full = create(all, { number: 'number', matrix: 'Array', predictable: true })
// The four units mathjs does not have, defined as the table defines them (NIST SP 811 (2008) App. B.8).
full.createUnit('TR', '12000 BTU/h')
full.createUnit('inHg', '3386.389 Pa')
full.createUnit('inH2O', '249.0889 Pa')
full.createUnit('ftH2O', '2989.067 Pa')
full.createUnit('mmPer100mm', '0.01 mm/mm')

/** Each unit id as a mathjs unit; null where no mathjs unit applies (the reciprocal COP of specific power, percent). */
const MATHJS_UNIT: Record<QuantityKind, Record<string, string | null>> = {
  temperature: { degF: 'degF', degC: 'degC', K: 'K' },
  temperature_difference: { deltaF: 'degR', deltaC: 'K', K: 'K' },
  pressure_gauge: { psig: 'psi', kPag: 'kPa', barg: 'bar', Pag: 'Pa', inHgVac: 'inHg' },
  pressure_absolute: { psia: 'psi', kPaa: 'kPa', bara: 'bar', Paa: 'Pa', inHgAbs: 'inHg' },
  pressure_differential: { psid: 'psi', kPad: 'kPa', Pad: 'Pa', ftH2O: 'ftH2O', inH2O: 'inH2O' },
  volumetric_flow: { gpm: 'gallon/minute', Lps: 'L/s', m3ph: 'm^3/h', m3ps: 'm^3/s' },
  power: { kW: 'kW', W: 'W', hp: 'hp' },
  current: { A: 'A' },
  voltage: { V: 'V', kV: 'kV' },
  frequency: { Hz: 'Hz' },
  time: { s: 's', min: 'minute', h: 'hour' },
  percent: { '%': null },
  cooling_capacity: { TR: 'TR', kW: 'kW', W: 'W', BtuPerH: 'BTU/h' },
  specific_power: { kWPerTon: 'kW/TR', kWPerKW: 'kW/kW', COP: null },
  efficiency: { COP: 'W/W', EER: 'BTU/(W h)' },
  rotational_speed: { rpm: 'cycle/minute', rps: 'cycle/s', radps: 'rad/s' },
  vibration_velocity: { inps: 'in/s', mmps: 'mm/s', mps: 'm/s' },
  alignment_offset: { mil: 'mil', mm: 'mm', in: 'in', m: 'm' },
  alignment_angularity: { milPerIn: 'mil/in', mmPer100mm: 'mmPer100mm', mmPerM: 'mm/m' },
}

/** mathjs's psi and hp are rounded at the 11th digit; the table derives them from the exact lbf and foot. */
const close = (actual: number, expected: number) => expect(Math.abs(actual - expected)).toBeLessThanOrEqual(1e-9 * Math.max(1, Math.abs(expected)))

describe('every unit of every quantity kind agrees with full mathjs', () => {
  it('when the table is listed, then every unit of every kind has its mathjs counterpart here (none is left unchecked)', () => {
    for (const kind of QUANTITY_KINDS) expect(Object.keys(MATHJS_UNIT[kind]).sort()).toEqual(unitsOf(kind).map((u) => u.id).sort())
  })

  const pairs = QUANTITY_KINDS.flatMap((kind) =>
    unitsOf(kind).flatMap((from) => unitsOf(kind).filter((to) => to.id !== from.id).map((to) => [kind, from.id, to.id] as const)),
  ).filter(([kind, from, to]) => MATHJS_UNIT[kind][from] !== null && MATHJS_UNIT[kind][to] !== null)

  it.each(pairs)('when a %s is converted from %s to %s, then mathjs gives the same number', (kind, from, to) => {
    const sign = (id: string) => (unitsOf(kind).find((u) => u.id === id)?.sign ?? 1)
    for (const value of [1, 37.5, -12.25, 0, 1234.5678]) {
      const expected = full.unit(value * sign(from), MATHJS_UNIT[kind][from]!).toNumber(MATHJS_UNIT[kind][to]!) * sign(to)
      close(convert(value, from, to, kind), expected)
    }
  })

  it('when COP is converted, then it is the reciprocal of kW/kW as mathjs gives it from kW/ton', () => {
    for (const kwPerTon of [0.45, 0.576, 0.8]) close(convert(kwPerTon, 'kWPerTon', 'COP', 'specific_power'), 1 / full.unit(kwPerTon, 'kW/TR').toNumber('kW/kW'))
  })
})

describe('the number-only expression parser agrees with full mathjs on the starter library', () => {
  const expressions = STARTER_LIBRARY.flatMap((t) => t.definition.sections.flatMap((s) => s.steps.flatMap((st) => st.fields)))
    .flatMap((f) => (f.computed ? [f.computed.expression] : []))
  const sources = [...new Set(expressions), '(a + b) / 2 - c * 3', '-a ^ 2 + +b', '2 a', 'max(a, b, c) - min(a, b, c)', 'sqrt(abs(a - b))']

  it('when the library is read, then it has computed fields to compare', () => expect(expressions.length).toBeGreaterThan(5))

  it.each(sources)('when "%s" is evaluated, then the result is what full mathjs gives', (source) => {
    const parsed = parseExpression(source)
    const fields = Object.fromEntries(parsed.fieldRefs.map((ref, i) => [ref, 40 + 7.5 * i]))
    const design: Record<string, number | string> = Object.fromEntries(parsed.designRefs.map((key) => [key, key === 'refrigerant' ? 'R-134a' : 500]))
    let ours: number | string
    try {
      ours = parsed.evaluate(fields, design)
    } catch (err) {
      ours = (err as { code?: string }).code ?? 'error'
    }
    const scope = new Map<string, unknown>([...Object.entries(EXPRESSION_FUNCTIONS), ...Object.entries(fields), ['design', design]])
    let theirs: number | string
    try {
      const value = full.evaluate(source, scope) as number
      theirs = Number.isFinite(value) ? value : 'NON_FINITE'
    } catch (err) {
      theirs = (err as { code?: string }).code ?? 'error'
    }
    if (typeof ours === 'number' && typeof theirs === 'number') expect(ours).toBe(theirs)
    else expect(ours).toBe(theirs)
  })
})
