import type { Role } from '@shared/types/roles'
import { KW_PER_TON } from '@shared/engineering/capacity'

/**
 * The demo's firm, people, projects and equipment. Every name, address, maker, model and serial is invented; the
 * design points are computed below from a few choices (capacity, efficiency, temperatures, flows per ton).
 */
export const DEMO_FIRM = 'Tallowmere Commissioning Group'

export interface DemoPerson {
  email: string
  displayName: string
  role: Role
  password: string
  /** Set for the technician who left the firm: deactivated this many days before the load, after their last run. */
  deactivatedDaysAgo?: number
}

export const DEMO_PEOPLE: DemoPerson[] = [
  { email: 'dana.whitlock@tallowmere.test', displayName: 'Dana Whitlock', role: 'admin', password: 'admin-demo-2026' },
  { email: 'rafe.okafor@tallowmere.test', displayName: 'Rafe Okafor', role: 'technician', password: 'tech-demo-2026' },
  { email: 'ines.marlow@tallowmere.test', displayName: 'Ines Marlow', role: 'technician', password: 'tech-demo-2026' },
  { email: 'wren.castellane@tallowmere.test', displayName: 'Wren Castellane', role: 'technician', password: 'tech-demo-2026' },
  { email: 'bastian.orrick@tallowmere.test', displayName: 'Bastian Orrick', role: 'technician', password: 'tech-demo-2026', deactivatedDaysAgo: 610 },
  { email: 'maren.solvik@vexleyhealth.test', displayName: 'Maren Solvik', role: 'owner_rep', password: 'owner-demo-2026' },
  { email: 'priya.halden@corranpoly.test', displayName: 'Priya Halden', role: 'owner_rep', password: 'owner-demo-2026' },
  { email: 'odile.brackwater@lisgardecivic.test', displayName: 'Odile Brackwater', role: 'owner_rep', password: 'owner-demo-2026' },
  { email: 'hollis.vantreight@ardenfell-univ.test', displayName: 'Hollis Vantreight', role: 'owner_rep', password: 'owner-demo-2026' },
  { email: 'mireille.ashcombe@harrowgatelife.test', displayName: 'Mireille Ashcombe', role: 'owner_rep', password: 'owner-demo-2026' },
  { email: 'jory.pendragast@mournevalehealth.test', displayName: 'Jory Pendragast', role: 'owner_rep', password: 'owner-demo-2026' },
  { email: 'theo.brannick@pellworthmech.test', displayName: 'Theo Brannick', role: 'contractor', password: 'closeout-demo-2026' },
  { email: 'tamsin.quarrelby@ketterholtmech.test', displayName: 'Tamsin Quarrelby', role: 'contractor', password: 'closeout-demo-2026' },
]

const r = (v: number, step = 1) => Math.round(v / step) * step

/** One of the demo's 500-ton chillers (also the sample report's machine). */
export function demoChiller(tag: string, location: string, serialNumber: string) {
  // 500 tons at the AHRI 550/590 rating conditions: 54 → 44 °F at 2.4 gpm/ton, 85 → 94.3 °F at 3.0 gpm/ton;
  // 0.576 kW/ton × 500 tons = 288 kW input.
  return {
    tag,
    kind: 'centrifugal_chiller',
    location,
    manufacturer: 'Halvard Thermal',
    model: 'HT-C500',
    serialNumber,
    yearBuilt: 2024,
    designPoint: {
      refrigerant: 'R-134a',
      capacity: { value: 500, unit: 'TR' },
      evaporatorEnteringWaterTemp: { value: 54, unit: 'degF' },
      evaporatorLeavingWaterTemp: { value: 44, unit: 'degF' },
      evaporatorWaterFlow: { value: 1200, unit: 'gpm' },
      evaporatorPressureDrop: { value: 18.5, unit: 'ftH2O' },
      condenserEnteringWaterTemp: { value: 85, unit: 'degF' },
      condenserLeavingWaterTemp: { value: 94.3, unit: 'degF' },
      condenserWaterFlow: { value: 1500, unit: 'gpm' },
      condenserPressureDrop: { value: 16.2, unit: 'ftH2O' },
      designKwPerTon: { value: 0.576, unit: 'kWPerTon' },
      inputPower: { value: 288, unit: 'kW' },
      voltage: { value: 460, unit: 'V' },
      frequency: { value: 60, unit: 'Hz' },
      fullLoadAmps: { value: 420, unit: 'A' },
      oilPressureSetpoint: { value: 35, unit: 'psid' },
      // Plain water without freeze protection: the machine's allowed leaving setpoint band (common practice 38–55 °F).
      chilledWaterSetpointMin: { value: 40, unit: 'degF' },
      chilledWaterSetpointMax: { value: 55, unit: 'degF' },
    },
  }
}

export type DemoEquipment = ReturnType<typeof demoChiller> | ReturnType<typeof pump>

interface ChillerChoice {
  tag: string
  location: string
  manufacturer: string
  model: string
  serialNumber: string
  yearBuilt: number
  refrigerant: 'R-134a' | 'R-513A' | 'R-1233zd(E)'
  volts: number
  /** Oil pressure setpoint in the project's unit (psid or kPa differential). */
  oilSetpoint: number
}

/**
 * An I-P chiller from its tons and kW/ton at 54 → 44 °F, 2.4 gpm/ton evaporator and 3.0 gpm/ton condenser from 85 °F:
 * the condenser carries the cooling plus the input power, so its leaving temperature follows from the heat balance.
 * Full-load amps: input power at a 0.87 power factor, plus 3 % (a nameplate rounds up).
 */
function chillerIP(c: ChillerChoice, tons: number, kwPerTon: number, evapDropFt: number, condDropFt: number) {
  const evapGpm = r(tons * 2.4, 10)
  const condGpm = r(tons * 3.0, 10)
  const inputKw = r(tons * kwPerTon)
  const condenserTons = tons + inputKw / KW_PER_TON
  const condLeaving = r(85 + (condenserTons * 12000) / (500 * condGpm), 0.1)
  const fla = r(((inputKw * 1000) / (Math.sqrt(3) * c.volts * 0.87)) * 1.03, 5)
  return {
    tag: c.tag,
    kind: 'centrifugal_chiller',
    location: c.location,
    manufacturer: c.manufacturer,
    model: c.model,
    serialNumber: c.serialNumber,
    yearBuilt: c.yearBuilt,
    designPoint: {
      refrigerant: c.refrigerant,
      capacity: { value: tons, unit: 'TR' },
      evaporatorEnteringWaterTemp: { value: 54, unit: 'degF' },
      evaporatorLeavingWaterTemp: { value: 44, unit: 'degF' },
      evaporatorWaterFlow: { value: evapGpm, unit: 'gpm' },
      evaporatorPressureDrop: { value: evapDropFt, unit: 'ftH2O' },
      condenserEnteringWaterTemp: { value: 85, unit: 'degF' },
      condenserLeavingWaterTemp: { value: Number(condLeaving.toFixed(1)), unit: 'degF' },
      condenserWaterFlow: { value: condGpm, unit: 'gpm' },
      condenserPressureDrop: { value: condDropFt, unit: 'ftH2O' },
      designKwPerTon: { value: kwPerTon, unit: 'kWPerTon' },
      inputPower: { value: inputKw, unit: 'kW' },
      voltage: { value: c.volts, unit: 'V' },
      frequency: { value: 60, unit: 'Hz' },
      fullLoadAmps: { value: fla, unit: 'A' },
      oilPressureSetpoint: { value: c.oilSetpoint, unit: 'psid' },
      chilledWaterSetpointMin: { value: 40, unit: 'degF' },
      chilledWaterSetpointMax: { value: 55, unit: 'degF' },
    },
  }
}

/**
 * An SI chiller from its kW and COP at 12 → 7 °C and 29.5 → 35 °C: flow = heat / (4.18 kJ/kg·K × ΔT) with 1 kg per
 * litre; the condenser carries cooling plus input. The specific power is 1 / COP in kW/kW.
 */
function chillerSI(c: ChillerChoice, kw: number, cop: number, evapDropKpa: number, condDropKpa: number) {
  const inputKw = r(kw / cop)
  const evapLps = r(kw / (4.18 * 5), 0.5)
  const condLps = r((kw + inputKw) / (4.18 * 5.5), 0.5)
  const fla = r(((inputKw * 1000) / (Math.sqrt(3) * c.volts * 0.87)) * 1.03, 1)
  return {
    tag: c.tag,
    kind: 'centrifugal_chiller',
    location: c.location,
    manufacturer: c.manufacturer,
    model: c.model,
    serialNumber: c.serialNumber,
    yearBuilt: c.yearBuilt,
    designPoint: {
      refrigerant: c.refrigerant,
      capacity: { value: kw, unit: 'kW' },
      evaporatorEnteringWaterTemp: { value: 12, unit: 'degC' },
      evaporatorLeavingWaterTemp: { value: 7, unit: 'degC' },
      evaporatorWaterFlow: { value: evapLps, unit: 'Lps' },
      evaporatorPressureDrop: { value: evapDropKpa, unit: 'kPad' },
      condenserEnteringWaterTemp: { value: 29.5, unit: 'degC' },
      condenserLeavingWaterTemp: { value: 35, unit: 'degC' },
      condenserWaterFlow: { value: condLps, unit: 'Lps' },
      condenserPressureDrop: { value: condDropKpa, unit: 'kPad' },
      designKwPerTon: { value: Number((1 / cop).toFixed(3)), unit: 'kWPerKW' },
      inputPower: { value: inputKw, unit: 'kW' },
      voltage: { value: c.volts, unit: 'V' },
      frequency: { value: 60, unit: 'Hz' },
      fullLoadAmps: { value: fla, unit: 'A' },
      oilPressureSetpoint: { value: c.oilSetpoint, unit: 'kPad' },
      chilledWaterSetpointMin: { value: 5, unit: 'degC' },
      chilledWaterSetpointMax: { value: 12, unit: 'degC' },
    },
  }
}

interface PumpChoice {
  tag: string
  service: 'chilled_water' | 'condenser_water'
  location: string
  serialNumber: string
  yearBuilt: number
  manufacturer?: string
  model?: string
}

/** An I-P pump: flow, head (ft of water), motor hp and full-load amps at 460 V. */
function pump(tag: string, service: string, location: string, serialNumber: string, gpm: number, headFt: number, hp: number, fla: number, extra: Partial<PumpChoice> = {}) {
  return {
    tag,
    kind: 'pump',
    location,
    manufacturer: extra.manufacturer ?? 'Quarrington Pump Co.',
    model: extra.model ?? 'QP-8x6-13',
    serialNumber,
    yearBuilt: extra.yearBuilt ?? 2025,
    designPoint: {
      pumpService: service,
      pumpDesignFlow: { value: gpm, unit: 'gpm' },
      pumpDesignHead: { value: headFt, unit: 'ftH2O' },
      motorRatedPower: { value: hp, unit: 'hp' },
      motorRatedSpeed: { value: 1780, unit: 'rpm' },
      voltage: { value: 460, unit: 'V' },
      frequency: { value: 60, unit: 'Hz' },
      fullLoadAmps: { value: fla, unit: 'A' },
    },
  }
}

/**
 * An I-P pump sized from its duty: hydraulic power = gpm × ft / 3960 (water horsepower), over a 78 % pump efficiency,
 * rounded up to the next standard motor size; full-load amps at 460 V from the usual NEMA table values.
 */
function pumpIP(p: PumpChoice, gpm: number, headFt: number) {
  const brakeHp = (gpm * headFt) / 3960 / 0.78
  const sizes: Array<[number, number]> = [[15, 21], [20, 27], [25, 34], [30, 40], [40, 52], [50, 65], [60, 77], [75, 96], [100, 124]]
  const [hp, fla] = sizes.find(([size]) => size >= brakeHp * 1.1) ?? sizes[sizes.length - 1]
  return pump(p.tag, p.service, p.location, p.serialNumber, gpm, headFt, hp, fla, p)
}

/** An SI pump: L/s, kPa, motor kW at 600 V; kW = L/s × kPa / 1000 / efficiency, next standard IEC size up. */
function pumpSI(p: PumpChoice, lps: number, headKpa: number) {
  const shaftKw = (lps * headKpa) / 1000 / 0.78
  const sizes: Array<[number, number]> = [[11, 14], [15, 18], [18.5, 22], [22, 26], [30, 35], [37, 42], [45, 52], [55, 63], [75, 85]]
  const [motorKw, fla] = sizes.find(([size]) => size >= shaftKw * 1.1) ?? sizes[sizes.length - 1]
  return {
    tag: p.tag,
    kind: 'pump',
    location: p.location,
    manufacturer: p.manufacturer ?? 'Brennock Fluid Systems',
    model: p.model ?? 'BF-150-315',
    serialNumber: p.serialNumber,
    yearBuilt: p.yearBuilt,
    designPoint: {
      pumpService: p.service,
      pumpDesignFlow: { value: lps, unit: 'Lps' },
      pumpDesignHead: { value: headKpa, unit: 'kPad' },
      motorRatedPower: { value: motorKw, unit: 'kW' },
      motorRatedSpeed: { value: 1780, unit: 'rpm' },
      voltage: { value: 600, unit: 'V' },
      frequency: { value: 60, unit: 'Hz' },
      fullLoadAmps: { value: fla, unit: 'A' },
    },
  }
}

export interface DemoProject {
  code: string
  name: string
  siteName: string
  siteAddress: string
  timeZone: string
  unitSystem: 'IP' | 'SI'
  reportPaper: 'Letter' | 'A4'
  distributionList: string[]
  members: string[]
  /** When the admin set the project up, in days before the load (before its first run). */
  createdDaysAgo: number
  /** Site elevation, m: gauge and vacuum readings there are read against a lower atmosphere. */
  siteElevationM?: number
  equipment: DemoEquipment[]
}

const HALVARD = { manufacturer: 'Halvard Thermal' }
const ORMSBY = { manufacturer: 'Ormsby Cryotech' }

export const DEMO_PROJECTS: DemoProject[] = [
  {
    code: 'LCC-CP',
    name: 'Lisgarde Civic Centre — central plant renewal',
    siteName: 'Lisgarde Civic Centre',
    siteAddress: '300 Cindermoor Boulevard, Sallowmesa, AZ 85999',
    timeZone: 'America/Phoenix',
    unitSystem: 'IP',
    reportPaper: 'Letter',
    distributionList: ['facilities@lisgardecivic.test', 'closeout@ketterholtmech.test'],
    members: ['bastian.orrick@tallowmere.test', 'rafe.okafor@tallowmere.test', 'odile.brackwater@lisgardecivic.test', 'tamsin.quarrelby@ketterholtmech.test'],
    createdDaysAgo: 1120,
    equipment: [
      chillerIP({ ...ORMSBY, tag: 'CH-1', location: 'Central plant, bay 1', model: 'OC-400R', serialNumber: 'OC23-40017', yearBuilt: 2023, refrigerant: 'R-513A', volts: 460, oilSetpoint: 35 }, 400, 0.6, 16.5, 19),
      chillerIP({ ...ORMSBY, tag: 'CH-2', location: 'Central plant, bay 2', model: 'OC-400R', serialNumber: 'OC23-40018', yearBuilt: 2023, refrigerant: 'R-513A', volts: 460, oilSetpoint: 35 }, 400, 0.6, 16.5, 19),
      pumpIP({ tag: 'CHWP-1', service: 'chilled_water', location: 'Central plant, pump row A', serialNumber: 'QP-23-3102', yearBuilt: 2023 }, 960, 75),
      pumpIP({ tag: 'CHWP-2', service: 'chilled_water', location: 'Central plant, pump row A', serialNumber: 'QP-23-3103', yearBuilt: 2023 }, 960, 75),
      pumpIP({ tag: 'CWP-1', service: 'condenser_water', location: 'Central plant, pump row B', serialNumber: 'QP-23-3110', yearBuilt: 2023 }, 1200, 65),
      pumpIP({ tag: 'CWP-2', service: 'condenser_water', location: 'Central plant, pump row B', serialNumber: 'QP-23-3111', yearBuilt: 2023 }, 1200, 65),
    ],
  },
  {
    code: 'ARD-EP',
    name: 'Ardenfell University — East Plant chilled-water expansion',
    siteName: 'Ardenfell University, East Plant',
    siteAddress: '12 Larchgrove Lane, Pellmoor, NY 14999',
    timeZone: 'America/New_York',
    unitSystem: 'IP',
    reportPaper: 'Letter',
    distributionList: ['energy.plant@ardenfell-univ.test', 'closeout@ketterholtmech.test'],
    members: ['bastian.orrick@tallowmere.test', 'ines.marlow@tallowmere.test', 'rafe.okafor@tallowmere.test', 'hollis.vantreight@ardenfell-univ.test', 'tamsin.quarrelby@ketterholtmech.test'],
    createdDaysAgo: 990,
    equipment: [
      chillerIP({ ...HALVARD, tag: 'CH-E1', location: 'East Plant, chiller hall, north', model: 'HT-C800', serialNumber: 'HX-24-0107', yearBuilt: 2024, refrigerant: 'R-134a', volts: 4160, oilSetpoint: 35 }, 800, 0.558, 19.5, 17.8),
      chillerIP({ ...HALVARD, tag: 'CH-E2', location: 'East Plant, chiller hall, centre', model: 'HT-C800', serialNumber: 'HX-24-0108', yearBuilt: 2024, refrigerant: 'R-134a', volts: 4160, oilSetpoint: 35 }, 800, 0.558, 19.5, 17.8),
      chillerIP({ ...HALVARD, tag: 'CH-E3', location: 'East Plant, chiller hall, south', model: 'HT-C800', serialNumber: 'HX-24-0109', yearBuilt: 2024, refrigerant: 'R-134a', volts: 4160, oilSetpoint: 35 }, 800, 0.558, 19.5, 17.8),
      pumpIP({ tag: 'CHWP-E1', service: 'chilled_water', location: 'East Plant, pump gallery', serialNumber: 'QP-24-5520', yearBuilt: 2024, model: 'QP-10x8-15' }, 1920, 95),
      pumpIP({ tag: 'CHWP-E2', service: 'chilled_water', location: 'East Plant, pump gallery', serialNumber: 'QP-24-5521', yearBuilt: 2024, model: 'QP-10x8-15' }, 1920, 95),
      pumpIP({ tag: 'CHWP-E3', service: 'chilled_water', location: 'East Plant, pump gallery', serialNumber: 'QP-24-5522', yearBuilt: 2024, model: 'QP-10x8-15' }, 1920, 95),
      pumpIP({ tag: 'CWP-E1', service: 'condenser_water', location: 'East Plant, pump gallery', serialNumber: 'QP-24-5530', yearBuilt: 2024, model: 'QP-12x10-15' }, 2400, 70),
      pumpIP({ tag: 'CWP-E2', service: 'condenser_water', location: 'East Plant, pump gallery', serialNumber: 'QP-24-5531', yearBuilt: 2024, model: 'QP-12x10-15' }, 2400, 70),
      pumpIP({ tag: 'CWP-E3', service: 'condenser_water', location: 'East Plant, pump gallery', serialNumber: 'QP-24-5532', yearBuilt: 2024, model: 'QP-12x10-15' }, 2400, 70),
    ],
  },
  {
    code: 'HLT-MP',
    name: 'Harrowgate Life Tower — mechanical penthouse chiller plant',
    siteName: 'Harrowgate Life Tower',
    siteAddress: '1770 Brookvane Street, Tellurock, CO 80999',
    timeZone: 'America/Denver',
    unitSystem: 'IP',
    // A high-altitude site: the standard atmosphere at 1610 m is about 83.4 kPa, so the vacuum evaporators of its
    // low-pressure machines saturate colder than a sea-level conversion would say.
    siteElevationM: 1610,
    reportPaper: 'Letter',
    distributionList: ['building.engineer@harrowgatelife.test', 'closeout@ketterholtmech.test'],
    members: ['bastian.orrick@tallowmere.test', 'ines.marlow@tallowmere.test', 'wren.castellane@tallowmere.test', 'mireille.ashcombe@harrowgatelife.test', 'tamsin.quarrelby@ketterholtmech.test'],
    createdDaysAgo: 770,
    equipment: [
      chillerIP({ ...ORMSBY, tag: 'CH-1', location: 'Level 41 mechanical penthouse, east', model: 'OC-650LP', serialNumber: 'OC24-65003', yearBuilt: 2024, refrigerant: 'R-1233zd(E)', volts: 480, oilSetpoint: 35 }, 650, 0.552, 17.2, 18.4),
      chillerIP({ ...ORMSBY, tag: 'CH-2', location: 'Level 41 mechanical penthouse, west', model: 'OC-650LP', serialNumber: 'OC24-65004', yearBuilt: 2024, refrigerant: 'R-1233zd(E)', volts: 480, oilSetpoint: 35 }, 650, 0.552, 17.2, 18.4),
      pumpIP({ tag: 'CHWP-1', service: 'chilled_water', location: 'Level 41, pump skid 1', serialNumber: 'QP-24-8841', yearBuilt: 2024 }, 1560, 110),
      pumpIP({ tag: 'CHWP-2', service: 'chilled_water', location: 'Level 41, pump skid 2', serialNumber: 'QP-24-8842', yearBuilt: 2024 }, 1560, 110),
      pumpIP({ tag: 'CWP-1', service: 'condenser_water', location: 'Level 41, pump skid 1', serialNumber: 'QP-24-8850', yearBuilt: 2024 }, 1950, 60),
      pumpIP({ tag: 'CWP-2', service: 'condenser_water', location: 'Level 41, pump skid 2', serialNumber: 'QP-24-8851', yearBuilt: 2024 }, 1950, 60),
    ],
  },
  {
    code: 'MRH-EC',
    name: 'Mournevale Regional Hospital — energy centre cooling',
    siteName: 'Mournevale Regional Hospital',
    siteAddress: '4500 Tillingham Drive, Greyfen, BC V0X 9Z9',
    timeZone: 'America/Vancouver',
    unitSystem: 'SI',
    reportPaper: 'A4',
    distributionList: ['energy.centre@mournevalehealth.test', 'closeout@pellworthmech.test'],
    members: ['wren.castellane@tallowmere.test', 'ines.marlow@tallowmere.test', 'jory.pendragast@mournevalehealth.test', 'theo.brannick@pellworthmech.test'],
    createdDaysAgo: 590,
    equipment: [
      chillerSI({ ...HALVARD, tag: 'CH-01', location: 'Energy centre, chiller room, bay A', model: 'HT-CZ2100', serialNumber: 'HT-25-02231', yearBuilt: 2025, refrigerant: 'R-513A', volts: 600, oilSetpoint: 240 }, 2100, 6.1, 58, 55),
      chillerSI({ ...HALVARD, tag: 'CH-02', location: 'Energy centre, chiller room, bay B', model: 'HT-CZ2100', serialNumber: 'HT-25-02232', yearBuilt: 2025, refrigerant: 'R-513A', volts: 600, oilSetpoint: 240 }, 2100, 6.1, 58, 55),
      pumpSI({ tag: 'CHWP-01', service: 'chilled_water', location: 'Energy centre, pump room', serialNumber: 'BF25-11902', yearBuilt: 2025 }, 100.5, 240),
      pumpSI({ tag: 'CHWP-02', service: 'chilled_water', location: 'Energy centre, pump room', serialNumber: 'BF25-11903', yearBuilt: 2025 }, 100.5, 240),
      pumpSI({ tag: 'CWP-01', service: 'condenser_water', location: 'Energy centre, pump room', serialNumber: 'BF25-11910', yearBuilt: 2025 }, 106.5, 190),
      pumpSI({ tag: 'CWP-02', service: 'condenser_water', location: 'Energy centre, pump room', serialNumber: 'BF25-11911', yearBuilt: 2025 }, 106.5, 190),
    ],
  },
  {
    code: 'CRP-B4',
    name: 'Corran Polytechnic — Building 4 cooling plant',
    siteName: 'Corran Polytechnic, North Campus',
    siteAddress: '88 Quillon Avenue, Harwick Bay, ON K0X 9Z9',
    timeZone: 'America/Toronto',
    unitSystem: 'SI',
    reportPaper: 'A4',
    distributionList: ['plant.operations@corranpoly.test'],
    members: ['ines.marlow@tallowmere.test', 'wren.castellane@tallowmere.test', 'priya.halden@corranpoly.test', 'theo.brannick@pellworthmech.test'],
    createdDaysAgo: 450,
    equipment: [
      {
        tag: 'CH-B4-1',
        kind: 'centrifugal_chiller',
        location: 'Building 4 plant room, level 0',
        manufacturer: 'Halvard Thermal',
        model: 'HT-CZ1400',
        serialNumber: 'HT-25-04418',
        yearBuilt: 2025,
        // 1400 kW at 12 → 7 °C: 1400 / (4.19 kJ/kg·K × 5 K) ≈ 66.8 kg/s ≈ 67 L/s; condenser carries 1400 + 221 kW over
        // 29.5 → 35 °C: 1621 / (4.18 × 5.5) ≈ 70.5 L/s. 0.158 kW/kW is COP 6.33.
        designPoint: {
          refrigerant: 'R-1233zd(E)',
          capacity: { value: 1400, unit: 'kW' },
          evaporatorEnteringWaterTemp: { value: 12, unit: 'degC' },
          evaporatorLeavingWaterTemp: { value: 7, unit: 'degC' },
          evaporatorWaterFlow: { value: 67, unit: 'Lps' },
          evaporatorPressureDrop: { value: 62, unit: 'kPad' },
          condenserEnteringWaterTemp: { value: 29.5, unit: 'degC' },
          condenserLeavingWaterTemp: { value: 35, unit: 'degC' },
          condenserWaterFlow: { value: 70.5, unit: 'Lps' },
          condenserPressureDrop: { value: 58, unit: 'kPad' },
          designKwPerTon: { value: 0.158, unit: 'kWPerKW' },
          inputPower: { value: 221, unit: 'kW' },
          voltage: { value: 600, unit: 'V' },
          frequency: { value: 60, unit: 'Hz' },
          fullLoadAmps: { value: 238, unit: 'A' },
          oilPressureSetpoint: { value: 170, unit: 'kPad' },
          chilledWaterSetpointMin: { value: 5, unit: 'degC' },
          chilledWaterSetpointMax: { value: 12, unit: 'degC' },
        },
      },
      pumpSI({ tag: 'CHWP-B4-1', service: 'chilled_water', location: 'Building 4 plant room, level 0', serialNumber: 'BF25-20417', yearBuilt: 2025, model: 'BF-125-250' }, 67, 210),
      pumpSI({ tag: 'CHWP-B4-2', service: 'chilled_water', location: 'Building 4 plant room, level 0', serialNumber: 'BF25-20418', yearBuilt: 2025, model: 'BF-125-250' }, 67, 210),
      pumpSI({ tag: 'CWP-B4-1', service: 'condenser_water', location: 'Building 4 plant room, level 0', serialNumber: 'BF25-20425', yearBuilt: 2025, model: 'BF-125-250' }, 70.5, 175),
      pumpSI({ tag: 'CWP-B4-2', service: 'condenser_water', location: 'Building 4 plant room, level 0', serialNumber: 'BF25-20426', yearBuilt: 2025, model: 'BF-125-250' }, 70.5, 175),
    ],
  },
  {
    code: 'VXH-CUP',
    name: 'Vexley General Hospital — central utility plant chiller replacement',
    siteName: 'Vexley General Hospital',
    siteAddress: '1400 Fernhollow Road, Marrowick, IL 60999',
    timeZone: 'America/Chicago',
    unitSystem: 'IP',
    reportPaper: 'Letter',
    distributionList: ['facilities.records@vexleyhealth.test', 'closeout@pellworthmech.test'],
    members: ['rafe.okafor@tallowmere.test', 'ines.marlow@tallowmere.test', 'maren.solvik@vexleyhealth.test', 'theo.brannick@pellworthmech.test'],
    createdDaysAgo: 280,
    equipment: [
      demoChiller('CH-1', 'Central utility plant, chiller bay east', 'HX-24-0311'),
      demoChiller('CH-2', 'Central utility plant, chiller bay west', 'HX-24-0312'),
      pump('CHWP-1', 'chilled_water', 'Primary chilled-water pump 1', 'QP-25-7781', 1200, 85, 40, 48),
      pump('CWP-1', 'condenser_water', 'Condenser-water pump 1', 'QP-25-7790', 1500, 70, 40, 47),
      pump('CHWP-2', 'chilled_water', 'Primary chilled-water pump 2', 'QP-25-7782', 1200, 85, 40, 48),
      pump('CWP-2', 'condenser_water', 'Condenser-water pump 2', 'QP-25-7791', 1500, 70, 40, 47),
    ],
  },
]
