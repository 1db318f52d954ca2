import { EngineeringError, requireFinite } from './errors'

/** Standard sea-level atmosphere, kPa (NIST SP 811 (2008) App. B.8: 1 atm = 101.325 kPa). */
export const STANDARD_ATMOSPHERE_KPA = 101.325

/** The barometric pressures a site may be given, kPa: below 60 kPa is above ~4 400 m, above 110 kPa is not weather. */
export const BAROMETRIC_RANGE_KPA = { min: 60, max: 110 } as const
/** The site elevations accepted, metres above sea level (the Dead Sea shore to high mountain sites). */
export const ELEVATION_RANGE_M = { min: -500, max: 5000 } as const

/**
 * Barometric pressure of the standard atmosphere at an elevation, kPa: p = 101.325 · (1 − 2.25577·10⁻⁵ · Z)^5.2559,
 * Z in metres (ASHRAE Handbook—Fundamentals, Psychrometrics chapter, eq. 3; docs/REFERENCES.md §Refrigerant saturation
 * and site barometric pressure). Weather moves the real value by about ±3 kPa; a measured value overrides it.
 */
export function barometricFromElevationKpa(elevationM: number): number {
  const z = requireFinite(elevationM, 'site elevation')
  if (z < ELEVATION_RANGE_M.min || z > ELEVATION_RANGE_M.max) {
    throw new EngineeringError('OUT_OF_RANGE', `Site elevation must be between \u2212${-ELEVATION_RANGE_M.min} m and ${ELEVATION_RANGE_M.max} m, got ${z < 0 ? `\u2212${-z}` : z} m`, { elevationM })
  }
  return STANDARD_ATMOSPHERE_KPA * (1 - 2.25577e-5 * z) ** 5.2559
}

/** Refuses a barometric pressure outside BAROMETRIC_RANGE_KPA; returns it otherwise. */
export function requireBarometricKpa(kpa: number): number {
  const p = requireFinite(kpa, 'barometric pressure')
  if (p < BAROMETRIC_RANGE_KPA.min || p > BAROMETRIC_RANGE_KPA.max) {
    throw new EngineeringError('OUT_OF_RANGE', `Barometric pressure must be between ${BAROMETRIC_RANGE_KPA.min} kPa and ${BAROMETRIC_RANGE_KPA.max} kPa, got ${p} kPa`, { kpa })
  }
  return p
}

/**
 * The site's barometric pressure, kPa, and where it came from: the project's stated value, else the standard
 * atmosphere at the project's elevation, else the standard sea-level atmosphere.
 */
export function siteBarometric(project: { barometricKpa?: number | null; siteElevationM?: number | null }): { kpa: number; source: 'stated' | 'elevation' | 'standard' } {
  if (typeof project.barometricKpa === 'number') return { kpa: project.barometricKpa, source: 'stated' }
  if (typeof project.siteElevationM === 'number') return { kpa: barometricFromElevationKpa(project.siteElevationM), source: 'elevation' }
  return { kpa: STANDARD_ATMOSPHERE_KPA, source: 'standard' }
}
