// Conversion factors: each unit Startproof accepts, as a multiple of its kind's coherent SI unit. Every value is either
// exact by definition or the value NIST SP 811 (2008) App. B.8 prints (docs/REFERENCES.md §Units, conversions and
// printed digits); the derived ones are computed here from the exact definitions, so nothing is rounded twice.
// tests/shared/unit-factors.test.ts checks every unit of every quantity kind against the full mathjs unit system.

/** 1 in = 0.0254 m exactly (NIST SP 811 (2008) App. B.8). */
export const INCH_M = 0.0254
/** 1 ft = 0.3048 m exactly (NIST SP 811 (2008) App. B.8). */
export const FOOT_M = 0.3048
/** 1 mil = 0.001 in = 2.54 × 10⁻⁵ m exactly (NIST SP 811 (2008) App. B.8). */
export const MIL_M = INCH_M / 1000
/** 1 lbf = 0.453 592 37 kg × 9.806 65 m/s² = 4.448 221 615 260 5 N exactly (NIST SP 811 (2008) App. B.8: 4.448 222 N). */
export const POUND_FORCE_N = 0.45359237 * 9.80665
/** 1 psi = 1 lbf/in² = 6 894.757 Pa (NIST SP 811 (2008) App. B.8: 6.894 757 × 10³ Pa). */
export const PSI_PA = POUND_FORCE_N / (INCH_M * INCH_M)
/** 1 bar = 10⁵ Pa exactly (NIST SP 811 (2008) App. B.8). */
export const BAR_PA = 1e5
/** Inch of mercury, conventional: 3.386 389 × 10³ Pa (NIST SP 811 (2008) App. B.8). */
export const INCH_OF_MERCURY_PA = 3386.389
/** Inch of water, conventional: 2.490 889 × 10² Pa (NIST SP 811 (2008) App. B.8). */
export const INCH_OF_WATER_PA = 249.0889
/** Foot of water, conventional: 2.989 067 × 10³ Pa (NIST SP 811 (2008) App. B.8). */
export const FOOT_OF_WATER_PA = 2989.067
/** 1 US gallon = 231 in³ = 3.785 411 784 L exactly (NIST SP 811 (2008) App. B.8). */
export const US_GALLON_M3 = 3.785411784e-3
/** 1 Btu (International Table) = 1 055.055 852 62 J exactly (NIST SP 811 (2008) App. B.8). */
export const BTU_IT_J = 1055.05585262
/** 1 ton of refrigeration = 12 000 Btu_IT/h = 3.516 853 kW (NIST SP 811 (2008) App. B.8). */
export const TON_OF_REFRIGERATION_W = (12000 * BTU_IT_J) / 3600
/** 1 hp (550 ft·lbf/s) = 745.699 872 W (NIST SP 811 (2008) App. B.8: 7.456 999 × 10² W). */
export const HORSEPOWER_W = 550 * FOOT_M * POUND_FORCE_N
/** 1 r/min = 2π/60 rad/s = 0.104 719 8 rad/s (NIST SP 811 (2008) App. B.8). */
export const REVOLUTION_RAD = 2 * Math.PI
/** 0 °C = 273.15 K; T/K = (t/°F + 459.67) / 1.8 (NIST SP 811 (2008) App. B.8). */
export const CELSIUS_ZERO_K = 273.15
export const FAHRENHEIT_ZERO_R = 459.67
/** 1 °F (and 1 °R) of temperature difference = 5/9 K exactly (NIST SP 811 (2008) App. B.8). */
export const RANKINE_K = 5 / 9
