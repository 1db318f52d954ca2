import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import {
  ahriTolerancePct,
  ahriTolerancePctSI,
  capacityKw,
  capacityTons,
  condenserApproachF,
  copFromKwPerTon,
  designDeviationPct,
  eerFromKwPerTon,
  EngineeringError,
  evaporatorApproachF,
  heatBalancePct,
  KW_PER_TON,
  kwPerTon,
  kwToTons,
  motorDerating,
  saturationPressureKpaAbs,
  saturationPressurePsig,
  saturationTempC,
  saturationTempF,
  tonsToKw,
  unbalancePct,
  waterAtAtmosphere,
  waterPropertiesIF97,
  waterSideHeatKw,
} from '../../shared/engineering'
import { convert } from '../../shared/units'

const near = (actual: number, expected: number, tol: number) => expect(Math.abs(actual - expected)).toBeLessThanOrEqual(tol)
const fToC = (f: number) => (f - 32) / 1.8
const gpmToLps = (gpm: number) => convert(gpm, 'gpm', 'Lps', 'volumetric_flow')

describe('water-side capacity', () => {
  it('when 1200 gpm is cooled from 54 to 44 °F, then the 500 rule gives 500.00 tons', () => {
    near(capacityTons(1200, 54, 44), 500, 0.01) // REFERENCES.md §1, ASHRAE Handbook—Fundamentals 500 rule [S]
  })
  it('when the same case uses IAPWS-IF97 properties with the flow metered at 54 °F, then it gives 501.5 tons ±0.1 %', () => {
    const tons = kwToTons(capacityKw(gpmToLps(1200), fToC(54), fToC(44), fToC(54)))
    near(tons, 501.5, 501.5 * 0.001) // REFERENCES.md §1 table, property-corrected [C]
  })
  it('when 50 kg/s with cp 4.19 kJ/kg·K is cooled 5.556 K, then it is 1163.98 kW = 330.97 tons', () => {
    const kw = waterSideHeatKw(50, 4.19, 5.556)
    near(kw, 1163.98, 0.01) // REFERENCES.md §1 table, SI case [S]
    near(kwToTons(kw), 330.97, 0.01)
  })
  it('when 1 ton is converted, then it is 3.516 853 kW', () => {
    near(KW_PER_TON, 3.516852842, 1e-9) // REFERENCES.md §1, NIST SP 811 App. B.8 [S]
    near(tonsToKw(500), 1758.43, 0.01) // REFERENCES.md §4 (500 tons = 1758.43 kW)
  })
  it('when the flow is zero, then the capacity is zero (a real reading, not a refusal)', () => {
    expect(capacityTons(0, 54, 44)).toBe(0)
  })
})

describe('IAPWS-IF97 region 1 water properties', () => {
  // IAPWS-IF97 Table 5 verification values [M] from memory of the published release
  const cases: Array<[number, number, number, number, number]> = [
    [300, 3e6, 0.00100215168, 4173.01218, 115331.273],
    [300, 80e6, 0.000971180894, 4010.08987, 184142.828],
    [500, 3e6, 0.0012024180, 4655.80682, 975542.239],
  ]
  it.each(cases)('when T = %d K and p = %d Pa, then v, cp and h match the release to 1e-8', (t, p, v, cp, h) => {
    const w = waterPropertiesIF97(t, p)
    near(1 / w.density, v, v * 1e-8)
    near(w.specificHeat, cp, cp * 1e-8)
    near(w.enthalpy, h, h * 1e-8)
  })
  // REFERENCES.md §1, water at 1 atm [C, IAPWS-IF97]
  it.each([
    [44, 999.92, 4201.3],
    [85, 995.82, 4180.2],
  ])('when water is at %d °F and 1 atm, then ρ = %d kg/m³ and cp = %d J/kg·K', (f, rho, cp) => {
    const w = waterAtAtmosphere(fToC(f))
    near(w.density, rho, 0.01)
    near(w.specificHeat, cp, 0.1)
  })
  // REFERENCES.md §1: the "500" factor with real properties [C]
  it.each([
    [44, 502.4],
    [54, 501.1],
    [85, 497.8],
    [94.3, 496.9],
  ])('when water is at %d °F, then ρ·60·cp in Btu/(h·gpm·°F) is %d', (f, factor) => {
    const w = waterAtAtmosphere(fToC(f))
    const lbPerGal = (w.density * 0.003785411784) / 0.45359237 // NIST SP 811 gallon and pound [S]
    near(lbPerGal * 60 * (w.specificHeat / 4186.8), factor, 0.05)
  })
})

describe('efficiency', () => {
  // REFERENCES.md §2, definitions + NIST SP 811 [S]
  it.each([
    [0.5, 7.0337, 24.0],
    [0.576, 6.1056, 20.833],
  ])('when kW/ton is %d, then COP is %d and EER is %d', (k, cop, eer) => {
    near(copFromKwPerTon(k), cop, 0.0001)
    near(eerFromKwPerTon(k), eer, 0.001)
  })
  it('when 288 kW drives 500 tons, then it is 0.576 kW/ton', () => {
    near(kwPerTon(288, 500), 0.576, 1e-12) // REFERENCES.md §4 example rating [M]
  })
})

describe('NEMA MG 1 unbalance', () => {
  // REFERENCES.md §3
  it.each([
    [[460, 467, 450], 1.961, 'NEMA MG 1 worked example [S]'],
    [[462, 463, 455], 1.087, 'US DOE Motor Tip Sheet [S]'],
    [[480, 476, 472], 0.84, '[C]; the wrong max − min method gives 1.68'],
  ] as const)('when phases read %j, then unbalance is %d % (%s)', (phases, pct, _source) => {
    near(unbalancePct(phases), pct, 0.001)
  })
  // NEMA MG 1 Fig. 14-1 derating read from the curve, REFERENCES.md §3 [M, ±0.02]
  it.each([
    [0, 1.0],
    [1, 1.0],
    [2, 0.95],
    [3, 0.88],
    [4, 0.82],
    [5, 0.75],
    [2.5, 0.915],
  ])('when unbalance is %d %, then the derating factor is %d', (pct, factor) => {
    near(motorDerating(pct), factor, 1e-12)
  })
  it('when unbalance is above 5 %, then a clear UNBALANCE_TOO_HIGH error is thrown', () => {
    expect(() => motorDerating(5.01)).toThrow(expect.objectContaining({ code: 'UNBALANCE_TOO_HIGH' })) // NEMA MG 1: above 5 % not recommended [S]
  })
  it('property: when the phases are reordered, then the unbalance does not change', () => {
    fc.assert(
      fc.property(fc.tuple(fc.double({ min: 1, max: 15000, noNaN: true }), fc.double({ min: 1, max: 15000, noNaN: true }), fc.double({ min: 1, max: 15000, noNaN: true })), ([a, b, c]) => {
        const u = unbalancePct([a, b, c])
        for (const p of [[a, c, b], [b, a, c], [b, c, a], [c, a, b], [c, b, a]]) near(unbalancePct(p), u, 1e-9 * Math.max(1, u))
      }),
    )
  })
  it('property: when every phase is scaled by the same factor, then the unbalance does not change', () => {
    fc.assert(
      fc.property(
        fc.tuple(fc.double({ min: 1, max: 1000, noNaN: true }), fc.double({ min: 1, max: 1000, noNaN: true }), fc.double({ min: 1, max: 1000, noNaN: true })),
        fc.double({ min: 0.001, max: 1000, noNaN: true }),
        ([a, b, c], k) => {
          const u = unbalancePct([a, b, c])
          near(unbalancePct([a * k, b * k, c * k]), u, 1e-9 * Math.max(1, u))
        },
      ),
    )
  })
})

describe('AHRI 550/590 tolerance and energy balance', () => {
  // REFERENCES.md §4 [M — verify against the edition cited]
  it.each([
    [100, 10, 5.0],
    [50, 10, 10.0],
  ])('when load is %d % with a %d °F full-load ΔT, then the tolerance is %d %', (load, dt, tol) => {
    near(ahriTolerancePct(load, dt), tol, 1e-9)
  })
  it('when the SI form is used with the same ΔT in K, then it agrees with the I-P form to 0.01 %', () => {
    near(ahriTolerancePctSI(100, 10 / 1.8), ahriTolerancePct(100, 10), 0.01)
    near(ahriTolerancePctSI(50, 10 / 1.8), ahriTolerancePct(50, 10), 0.01)
  })
  it('when rated 500 tons and 0.576 kW/ton at full load with ΔT 10 °F, then the acceptance limits are 475 tons and 0.6048 kW/ton', () => {
    const tol = ahriTolerancePct(100, 10) / 100
    near(500 * (1 - tol), 475, 1e-9)
    near(0.576 * (1 + tol), 0.6048, 1e-9)
  })
  it('when Q_evap = 1758.43 kW, W = 300 kW and Q_cond = 2020 kW, then the heat balance is +1.90 %', () => {
    near(heatBalancePct(1758.43, 2020, 300), 1.9, 0.005)
  })
})

describe('refrigerant saturation against independent published points', () => {
  // REFERENCES.md §5, NIST Chemistry WebBook values [M]
  it.each([
    ['R-134a', 0, 292.8, 0.0005],
    ['R-134a', 40, 1016.6, 0.0005],
  ])('when %s is saturated at %d °C, then the pressure is %d kPa (abs) within the table accuracy', (ref, c, kpa, tol) => {
    near(saturationPressureKpaAbs(ref, c), kpa, kpa * tol)
  })
  it('when R-1233zd(E) is at 0 psig (101.325 kPa), then it boils at 18.26 °C (NIST WebBook [M]), within 0.1 K', () => {
    near(saturationTempC('R-1233zd(E)', 101.325), 18.26, 0.1)
    near(saturationTempF('R-1233zd(E)', 0), 18.26 * 1.8 + 32, 0.2)
  })
  it.each([
    ['R-134a', -26.07],
    ['R-513A', -29.2],
  ])('when %s is at 1 atm, its boiling point %d °C lies below the 0 °F table, then OUTSIDE_TABLE is thrown', (ref) => {
    expect(() => saturationTempC(ref, 101.325)).toThrow(expect.objectContaining({ code: 'OUTSIDE_TABLE' }))
  })
  it('when R-513A is read at 40 °F, then the dew point lies close to R-134a (a 56/44 R-1234yf/R-134a blend, common practice: slightly higher pressure)', () => {
    const blend = saturationPressurePsig('R-513A', 40)
    const r134a = saturationPressurePsig('R-134a', 40)
    expect(blend).toBeGreaterThan(r134a)
    expect(blend - r134a).toBeLessThan(6)
  })
  it('when R-1233zd(E) is at 40 °F, then the gauge pressure is negative (the evaporator runs in vacuum)', () => {
    expect(saturationPressurePsig('R-1233zd(E)', 40)).toBeLessThan(0) // REFERENCES.md §5 [S]
  })
  it('property: when a pressure is turned into a saturation temperature and back, then it is unchanged', () => {
    fc.assert(
      fc.property(fc.constantFrom('R-134a', 'R-513A', 'R-1233zd(E)'), fc.double({ min: 0, max: 140, noNaN: true }), (ref, f) => {
        near(saturationTempF(ref, saturationPressurePsig(ref, f)), f, 1e-6)
      }),
    )
  })
})

describe('approach', () => {
  // REFERENCES.md §5 table [C]
  it('when R-134a suction is 35.0 psig and leaving chilled water 42.0 °F, then saturated is 39.95 °F and approach 2.05 °F', () => {
    const sat = saturationTempF('R-134a', 35)
    near(sat, 39.95, 0.01)
    near(evaporatorApproachF(42, sat), 2.05, 0.01)
  })
  it('when R-134a condenser is 124.0 psig and leaving condenser water 97.5 °F, then saturated is 99.93 °F and approach 2.43 °F', () => {
    const sat = saturationTempF('R-134a', 124)
    near(sat, 99.93, 0.01)
    near(condenserApproachF(97.5, sat), 2.43, 0.01)
  })
})

describe('design deviation', () => {
  it.each([
    [475, 500, -5],
    [0.6048, 0.576, 5],
    [1200, 1200, 0],
  ])('when measured is %d against design %d, then the deviation is %d %', (m, d, pct) => near(designDeviationPct(m, d), pct, 1e-9))
})

describe('bad input is a typed error, never NaN or a silent zero', () => {
  const cases: Array<[string, () => number, string]> = [
    ['a non-finite flow', () => capacityTons(Number.NaN, 54, 44), 'NON_FINITE'],
    ['an infinite temperature', () => capacityTons(1200, Infinity, 44), 'NON_FINITE'],
    ['a negative flow', () => capacityTons(-1, 54, 44), 'NEGATIVE_VALUE'],
    ['a negative SI flow', () => capacityKw(-1, 12, 7), 'NEGATIVE_VALUE'],
    ['water below 0 °C', () => capacityKw(10, 2, -3), 'OUT_OF_RANGE'],
    ['kW/ton at zero capacity', () => kwPerTon(300, 0), 'ZERO_DIVISOR'],
    ['kW/ton at negative capacity', () => kwPerTon(300, -5), 'NEGATIVE_VALUE'],
    ['COP of zero kW/ton', () => copFromKwPerTon(0), 'ZERO_DIVISOR'],
    ['two phases', () => unbalancePct([460, 467]), 'MISSING_PHASE'],
    ['a missing phase', () => unbalancePct([460, undefined as unknown as number, 450]), 'MISSING_PHASE'],
    ['a NaN phase', () => unbalancePct([460, Number.NaN, 450]), 'NON_FINITE'],
    ['all phases zero', () => unbalancePct([0, 0, 0]), 'ZERO_DIVISOR'],
    ['a negative unbalance', () => motorDerating(-1), 'NEGATIVE_VALUE'],
    ['zero condenser heat', () => heatBalancePct(100, 0, 20), 'ZERO_DIVISOR'],
    ['zero load', () => ahriTolerancePct(0, 10), 'OUT_OF_RANGE'],
    ['load above 100 %', () => ahriTolerancePct(110, 10), 'OUT_OF_RANGE'],
    ['zero full-load ΔT', () => ahriTolerancePct(100, 0), 'ZERO_DIVISOR'],
    ['an unknown refrigerant', () => saturationTempF('R-22', 60), 'UNKNOWN_REFRIGERANT'],
    ['a pressure above the table', () => saturationTempF('R-134a', 400), 'OUTSIDE_TABLE'],
    ['a temperature below the table', () => saturationPressurePsig('R-134a', -10), 'OUTSIDE_TABLE'],
    ['a NaN pressure', () => saturationTempF('R-134a', Number.NaN), 'NON_FINITE'],
    ['a zero design value', () => designDeviationPct(10, 0), 'ZERO_DIVISOR'],
  ]
  it.each(cases)('when given %s, then an EngineeringError with the right code is thrown', (_n, act, code) => {
    let caught: unknown
    try {
      act()
    } catch (err) {
      caught = err
    }
    expect(caught).toBeInstanceOf(EngineeringError)
    expect((caught as EngineeringError).code).toBe(code)
    expect((caught as EngineeringError).message.length).toBeGreaterThan(10)
  })
})
