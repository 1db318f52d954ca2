import { EngineeringError, requireFinite } from './errors'

// IAPWS-IF97 region 1 (compressed liquid), Revised Release on the IAPWS Industrial Formulation 1997,
// Table 2: exponents I, J and coefficients n of the dimensionless Gibbs free energy.
const I = [0, 0, 0, 0, 0, 0, 0, 0, 1, 1, 1, 1, 1, 1, 2, 2, 2, 2, 2, 3, 3, 3, 4, 4, 4, 5, 8, 8, 21, 23, 29, 30, 31, 32]
const J = [-2, -1, 0, 1, 2, 3, 4, 5, -9, -7, -1, 0, 1, 3, -3, 0, 1, 3, 17, -4, 0, 6, -5, -2, 10, -8, -11, -6, -29, -31, -38, -39, -40, -41]
const N = [
  0.14632971213167, -0.84548187169114, -0.3756360367204e1, 0.33855169168385e1, -0.95791963387872,
  0.15772038513228, -0.16616417199501e-1, 0.81214629983568e-3, 0.28319080123804e-3, -0.60706301565874e-3,
  -0.18990068218419e-1, -0.32529748770505e-1, -0.21841717175414e-1, -0.5283835796993e-4, -0.47184321073267e-3,
  -0.30001780793026e-3, 0.47661393906987e-4, -0.44141845330846e-5, -0.72694996297594e-15, -0.31679644845054e-4,
  -0.28270797985312e-5, -0.85205128120103e-9, -0.22425281908e-5, -0.65171222895601e-6, -0.14341729937924e-12,
  -0.40516996860117e-6, -0.12734301741641e-8, -0.17424871230634e-9, -0.68762131295531e-18, 0.14478307828521e-19,
  0.26335781662795e-22, -0.11947622640071e-22, 0.18228094581404e-23, -0.93537087292458e-25,
]
const R = 461.526 // J/(kg·K), IF97 specific gas constant of water
const P_STAR = 16.53e6 // Pa
const T_STAR = 1386 // K

export interface WaterProperties {
  /** kg/m³ */
  density: number
  /** J/(kg·K) */
  specificHeat: number
  /** J/kg, IF97 reference state */
  enthalpy: number
}

/** Density (kg/m³), isobaric specific heat (J/kg·K) and enthalpy (J/kg) of compressed liquid water at T (K) and p (Pa); IAPWS-IF97 region 1. */
export function waterPropertiesIF97(temperatureK: number, pressurePa = 101325): WaterProperties {
  requireFinite(temperatureK, 'temperature')
  requireFinite(pressurePa, 'pressure')
  // Region 1's bounds; the caller keeps the state liquid (at 1 atm, below 99.97 °C).
  if (temperatureK < 273.15 || temperatureK > 623.15 || pressurePa <= 0 || pressurePa > 100e6) {
    throw new EngineeringError(
      'OUT_OF_RANGE',
      `Liquid-water properties cover 0 °C to 350 °C and up to 100 MPa, got ${(temperatureK - 273.15).toFixed(2)} °C at ${pressurePa} Pa`,
      { temperatureK, pressurePa },
    )
  }
  const pi = pressurePa / P_STAR
  const tau = T_STAR / temperatureK
  const a = 7.1 - pi
  const b = tau - 1.222
  let gammaPi = 0
  let gammaTau = 0
  let gammaTauTau = 0
  for (let i = 0; i < N.length; i++) {
    gammaPi -= N[i] * I[i] * a ** (I[i] - 1) * b ** J[i]
    gammaTau += N[i] * a ** I[i] * J[i] * b ** (J[i] - 1)
    gammaTauTau += N[i] * a ** I[i] * J[i] * (J[i] - 1) * b ** (J[i] - 2)
  }
  const specificVolume = (R * temperatureK * pi * gammaPi) / pressurePa
  return {
    density: 1 / specificVolume,
    specificHeat: -R * tau * tau * gammaTauTau,
    enthalpy: R * temperatureK * tau * gammaTau,
  }
}

/** Density and specific heat of water at 1 atm and `temperatureC` (0–99 °C), as used for water-side capacity; IAPWS-IF97. */
export function waterAtAtmosphere(temperatureC: number): WaterProperties {
  requireFinite(temperatureC, 'water temperature')
  if (temperatureC < 0 || temperatureC > 99) {
    throw new EngineeringError('OUT_OF_RANGE', `Water temperature must be between 0 °C and 99 °C for liquid water at 1 atm, got ${temperatureC} °C`, { temperatureC })
  }
  return waterPropertiesIF97(temperatureC + 273.15, 101325)
}
