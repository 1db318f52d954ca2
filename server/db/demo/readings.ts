import type { ChecklistDefinition, ChecklistField } from '@shared/schemas/checklist'
import type { FieldEntry } from '@shared/schemas/reading'
import { KW_PER_TON } from '@shared/engineering/capacity'
import { saturationPressurePsig } from '@shared/engineering/refrigerant'
import { convert, displayUnit, unitSpec, type QuantityKind, type UnitSystem } from '@shared/units/quantities'
import { fieldPlaces } from '../../services/run.service'

/**
 * Invented but physically consistent readings for one demo run, as a technician would type them in the project's
 * units. The numbers are worked out in I-P (the starter templates' units) from the equipment's design point and a
 * few knobs (load, flows, approaches, supply voltage …); every value is rounded as an instrument would show it
 * before the next one is derived from it, so capacity, kW/ton and the heat balance come out of the typed values.
 * The verdicts are not decided here: the run service judges every entry with the shared rules.
 */

/** A deterministic pseudo-random generator (mulberry32), so the demo is the same every time it is loaded. */
export function rng(start: number) {
  let a = start >>> 0
  const next = () => {
    a = (a + 0x6d2b79f5) >>> 0
    let t = a
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
  return {
    next,
    between: (lo: number, hi: number) => lo + (hi - lo) * next(),
    pick: <T>(items: readonly T[]): T => items[Math.floor(next() * items.length)],
  }
}
export type Rng = ReturnType<typeof rng>

export type DesignValues = Record<string, { value: number; unit: string } | string | boolean | undefined>

/** Knobs of a chiller run; the defaults give a clean machine at design. */
export interface ChillerKnobs {
  load?: number
  chwFlowFactor?: number
  cwFlowFactor?: number
  kwFactor?: number
  evapApproach?: number
  condApproach?: number
  voltageSpreadPct?: number
  oilHeaterHours?: number
  starterRampS?: number
  /** Low oil pressure trip relative to its setting, percent (negative is late). */
  lowOilTripPct?: number
  /** Capture the start sequence (oil pressure ramp, proving hold, starter ramp). */
  startSequence?: boolean
}

export interface PumpKnobs {
  flowFactor?: number
  ampsFactor?: number
  vibrationWorst?: number
  softFoot?: number
  alignmentMethod?: 'laser' | 'dial' | 'straightedge'
}

export interface GeneratedRun {
  /** Entries in checklist order (fields the technician types; computed ones follow from them). */
  entries: Array<{ fieldId: string; entry: FieldEntry }>
}

interface Writer {
  /** Records a number given in I-P `ipUnit`, returns it as typed (rounded in the project's unit) back in I-P. */
  num(fieldId: string, valueIp: number, ipUnit?: string, decimals?: number): number
  put(fieldId: string, entry: FieldEntry): void
  entries: Array<{ fieldId: string; entry: FieldEntry }>
}

function writer(definition: ChecklistDefinition, system: UnitSystem, overrides: Record<string, { unit: string; decimals: number }> = {}): Writer {
  const places = fieldPlaces(definition)
  const entries: Array<{ fieldId: string; entry: FieldEntry }> = []
  return {
    entries,
    put(fieldId, entry) {
      if (!places.has(fieldId)) throw new Error(`demo readings: no field ${fieldId}`)
      entries.push({ fieldId, entry })
    },
    num(fieldId, valueIp, ipUnit, decimals) {
      const field: ChecklistField | undefined = places.get(fieldId)?.field
      if (!field?.quantity || !field.unit) throw new Error(`demo readings: ${fieldId} is not a measured field`)
      const kind = field.quantity as QuantityKind
      const from = ipUnit ?? field.unit
      const special = overrides[fieldId]
      const unit = special?.unit ?? (system === 'IP' ? field.unit : displayUnit(kind, 'SI'))
      const places10 = special?.decimals ?? decimals ?? unitSpec(kind, unit).decimals
      const typed = Number(convert(valueIp, from, unit, kind).toFixed(places10))
      entries.push({ fieldId, entry: { value: typed, unit } })
      return convert(typed, unit, from, kind)
    },
  }
}

const dv = (design: DesignValues, key: string, unit: string, kind: QuantityKind): number => {
  const q = design[key] as { value: number; unit: string } | undefined
  if (!q) throw new Error(`demo readings: design point has no ${key}`)
  return convert(q.value, q.unit, unit, kind)
}

/** Entries in the order the checklist asks for them (the order a technician fills them in). */
function ordered(definition: ChecklistDefinition, entries: Writer['entries']): Writer['entries'] {
  const order = [...fieldPlaces(definition).keys()]
  return [...entries].sort((a, b) => order.indexOf(a.fieldId) - order.indexOf(b.fieldId))
}

const yes = (w: Writer, ...ids: string[]) => ids.forEach((id) => w.put(id, { value: true }))

/** Three line voltages around `base` whose largest deviation from their average is about `spreadPct`. */
function threePhase(r: Rng, base: number, spreadPct: number): [number, number, number] {
  const d = (base * spreadPct) / 100
  const order = r.pick([[1, -0.4, -0.6], [-0.5, 1, -0.5], [-0.7, -0.3, 1]] as const)
  return [base + d * order[0], base + d * order[1], base + d * order[2]]
}

export function chillerRun(
  definition: ChecklistDefinition,
  system: UnitSystem,
  design: DesignValues,
  r: Rng,
  k: ChillerKnobs,
  people: { technician: string; attendees: string },
  atmosphereKpa = 101.325,
): GeneratedRun {
  const has = (fieldId: string) => fieldPlaces(definition).has(fieldId)
  const refrigerant = String(design.refrigerant)
  const lowPressure = refrigerant === 'R-1233zd(E)'
  // A machine with a vacuum evaporator is read in inches of mercury on an I-P gauge; an SI gauge reads negative kPa.
  const w = writer(definition, system, lowPressure ? { evapPressure: system === 'IP' ? { unit: 'inHgVac', decimals: 1 } : { unit: 'kPag', decimals: 1 } } : {})
  const tons = dv(design, 'capacity', 'TR', 'cooling_capacity')
  const evapGpm = dv(design, 'evaporatorWaterFlow', 'gpm', 'volumetric_flow')
  const condGpm = dv(design, 'condenserWaterFlow', 'gpm', 'volumetric_flow')
  const chwOutDesign = dv(design, 'evaporatorLeavingWaterTemp', 'degF', 'temperature')
  const cwInDesign = dv(design, 'condenserEnteringWaterTemp', 'degF', 'temperature')
  const kwPerTonDesign = dv(design, 'designKwPerTon', 'kWPerTon', 'specific_power')
  const volts = dv(design, 'voltage', 'V', 'voltage')
  const fla = dv(design, 'fullLoadAmps', 'A', 'current')
  const oilSet = dv(design, 'oilPressureSetpoint', 'psid', 'pressure_differential')
  const evapDrop = dv(design, 'evaporatorPressureDrop', 'ftH2O', 'pressure_differential')
  const condDrop = dv(design, 'condenserPressureDrop', 'ftH2O', 'pressure_differential')
  const hermetic = lowPressure

  yes(w, 'safetyBriefing', 'manufacturerInstructions', 'supplyMatchesNameplate', 'phaseRotation', 'terminationsChecked', 'controlPowerHealthy')
  const chwFlowFactor = k.chwFlowFactor ?? r.between(0.975, 1.03)
  const cwFlowFactor = k.cwFlowFactor ?? r.between(0.975, 1.03)
  yes(w, 'chwPumpRunning', 'chwFlowProven', 'cwPumpRunning', 'cwFlowProven', 'waterBoxesVented')
  w.num('chwPressureDrop', evapDrop * chwFlowFactor ** 2 * r.between(0.98, 1.02))
  w.num('cwPressureDrop', condDrop * cwFlowFactor ** 2 * r.between(0.98, 1.02))
  yes(w, 'oilLevelOk', 'oilHeaterOn')
  w.num('oilHeaterHours', k.oilHeaterHours ?? r.pick([26, 30, 36, 40, 48]), 'h', 0)
  yes(w, 'refrigerantMatchesNameplate', 'chargeRecorded', 'leakCheckClean', 'refrigerantDetectorTested')
  const airCooledStarter = r.next() < 0.3
  w.put('starterCoolantLevel', { value: airCooledStarter ? 'air_cooled' : 'at_mark' })
  w.put('starterCoolingSource', { value: airCooledStarter ? 'air_cooled' : 'condenser_water' })
  yes(w, 'starterSettingsChecked', 'safetiesInCircuit', 'safetySetpointsChecked')
  w.put('couplingGuard', { value: hermetic ? 'hermetic' : 'in_place' })

  if (k.startSequence) {
    // Oil pump start at t = 0: the pressure climbs to a little above the setpoint, is proven, holds through the
    // proving timer, and dips slightly as the drive starts and the shaft seal and bearings take oil.
    const peak = Math.max(oilSet * 1.12, 38)
    const reachS = r.between(14, 20)
    const driveS = Math.round(reachS + r.between(24, 32))
    const pts: Array<[number, number]> = [
      [0, 0.8],
      [4, peak * 0.22],
      [8, peak * 0.5],
      [12, peak * 0.78],
      [Math.round(reachS), peak * 0.97],
      [Math.round(reachS) + 6, peak],
      [driveS - 2, peak * 0.995],
      [driveS + 3, peak * 0.9],
      [driveS + 10, peak * 0.94],
      [driveS + 20, peak * 0.95],
    ]
    const unit = system === 'IP' ? 'psid' : 'kPad'
    const decimals = system === 'IP' ? 1 : 0
    w.put('oilPressureRamp', {
      value: pts.map(([t, v]) => [t, Number(convert(v, 'psid', unit, 'pressure_differential').toFixed(decimals))] as [number, number]),
      unit,
      driveStartS: driveS,
    })
    w.num('oilPressureAtDriveStart', peak * 0.995)
    // The capture marks the drive start; a template without that link still asks for the stopwatch time.
    if (!fieldPlaces(definition).get('prelubeTime')?.field.fromDriveStart) w.num('prelubeTime', driveS, 's', 0)
    w.num('starterRampTime', k.starterRampS ?? r.between(3.8, 6.2), 's', 1)
    yes(w, 'startWithoutTrouble')
  }

  // Running at load: chilled water first, then the power it takes, then the condenser that rejects both.
  const load = k.load ?? r.between(0.99, 1.02)
  const chwFlow = w.num('chwFlow', evapGpm * chwFlowFactor)
  const chwOut = chwOutDesign + r.between(-0.25, 0.25)
  const range = (tons * load * 12000) / (500 * chwFlow)
  const chwIn = w.num('chwEntering', chwOut + range)
  const chwOutTyped = w.num('chwLeaving', chwOut)
  const capacity = (500 * chwFlow * (chwIn - chwOutTyped)) / 12000
  const kwIn = capacity * kwPerTonDesign * (k.kwFactor ?? r.between(0.96, 1.01))
  const vAvg = volts * r.between(0.995, 1.025)
  const [va, vb, vc] = threePhase(r, vAvg, k.voltageSpreadPct ?? r.between(0.2, 0.6))
  const amps = Math.min((kwIn * 1000) / (Math.sqrt(3) * vAvg * r.between(0.9, 0.92)), fla * 0.97)
  const [ia, ib, ic] = threePhase(r, amps, r.between(0.5, 1.5))
  w.num('voltsAB', va, 'V', 0)
  w.num('voltsBC', vb, 'V', 0)
  w.num('voltsCA', vc, 'V', 0)
  w.num('ampsA', Math.min(ia, fla), 'A', 0)
  w.num('ampsB', Math.min(ib, fla), 'A', 0)
  w.num('ampsC', Math.min(ic, fla), 'A', 0)
  const kwTyped = w.num('inputKw', kwIn)
  w.num('oilPressureRunning', oilSet * r.between(1.05, 1.18))
  w.num('oilTempRunning', r.between(118, 138))
  const evapSat = chwOutTyped - (k.evapApproach ?? r.between(0.9, 2.0))
  // The fourth reading of the evaporator step is the refrigerant pressure the saturated temperature comes from.
  w.num('evapPressure', saturationPressurePsig(refrigerant, evapSat, 'dew', atmosphereKpa), 'psig', lowPressure ? 2 : 1)
  const cwIn = w.num('cwEntering', cwInDesign + r.between(-0.6, 0.3))
  const cwFlow = w.num('cwFlow', condGpm * cwFlowFactor)
  const rejected = capacity + kwTyped / KW_PER_TON
  const cwOut = w.num('cwLeaving', cwIn + (rejected * 12000) / (500 * cwFlow))
  const condSat = cwOut + (k.condApproach ?? r.between(0.9, 2.2))
  w.num('condPressure', saturationPressurePsig(refrigerant, condSat, 'dew', atmosphereKpa), 'psig', lowPressure ? 2 : 1)
  if (has('capacityControl')) {
    // The test conditions (template revision 2): a machine below about 97 % of design was following the building load.
    w.put('capacityControl', { value: load < 0.97 ? 'following' : 'full' })
    w.put('condenserControl', { value: cwIn < cwInDesign - 0.4 ? 'colder' : 'design' })
    w.num('loadAmpsPct', ((ia + ib + ic) / 3 / fla) * 100, '%', 0)
  }
  w.num('chwSetpoint', chwOutDesign)

  yes(w, 'chwFlowLossTrip')
  w.num('chwFlowLossTime', r.between(2.4, 4.8), 's', 1)
  yes(w, 'cwFlowLossTrip')
  w.num('cwFlowLossTime', r.between(2.6, 5.2), 's', 1)
  yes(w, 'restartBlockedWithoutFlow', 'lowEvapTrip')
  w.num('lowEvapSetting', 34)
  const testSetting = w.num('lowEvapTestSetting', 38)
  w.num('lowEvapTripValue', testSetting + r.between(-0.2, 0.5))
  yes(w, 'highCondTrip')
  const highSet = w.num('highCondSetting', saturationPressurePsig(refrigerant, lowPressure ? 112 : 118), 'psig', lowPressure ? 1 : 0)
  w.num('highCondTripValue', highSet * (1 + r.between(-2.2, 0.8) / 100), 'psig', lowPressure ? 1 : 0)
  yes(w, 'lowOilTrip')
  const lowOilSet = w.num('lowOilSetting', oilSet * 0.45, 'psid', 0)
  w.num('lowOilTripValue', lowOilSet * (1 + (k.lowOilTripPct ?? r.between(-1.5, 3.5)) / 100))
  yes(w, 'settingsRestored')
  w.put('safetyTestNotes', { value: r.pick([
    'Flow switches tested by stopping each pump from its starter; low evaporator cutout raised to 38 °F for the test and put back to 34 °F.',
    'All cutouts tripped within limits. Settings sheet initialled by the site engineer.',
    'High condenser cutout tested by closing the tower bypass slowly; the machine stopped and needed a manual reset, as specified.',
  ]) })
  w.put('trainingTopics', { value: 'Starting and stopping, alarms and resets, why safeties are never bypassed, the daily log sheet, standby lubrication, seasonal shutdown and who to call.' })
  w.put('trainingAttendees', { value: people.attendees })
  w.put('trainingGivenBy', { value: people.technician })
  w.num('trainingHours', r.pick([2, 3, 3.5, 4]), 'h', 1)
  yes(w, 'manualsHandedOver', 'taskStandbyLubrication')
  w.put('taskHandTurning', { value: hermetic ? 'hermetic' : 'explained' })
  yes(w, 'taskTubeBrushing', 'taskOilFilter')
  w.put('taskStarterCoolant', { value: airCooledStarter ? 'air_cooled' : 'explained' })
  yes(w, 'taskOilAnalysis', 'taskLeakInspections')
  return { entries: ordered(definition, w.entries) }
}

export function pumpRun(definition: ChecklistDefinition, system: UnitSystem, design: DesignValues, r: Rng, k: PumpKnobs): GeneratedRun {
  const w = writer(definition, system)
  const flow = dv(design, 'pumpDesignFlow', 'gpm', 'volumetric_flow')
  const headPsi = dv(design, 'pumpDesignHead', 'psid', 'pressure_differential')
  const volts = dv(design, 'voltage', 'V', 'voltage')
  const fla = dv(design, 'fullLoadAmps', 'A', 'current')
  const speed = dv(design, 'motorRatedSpeed', 'rpm', 'rotational_speed')
  yes(w, 'pumpSafetyBriefing', 'systemFilledVented', 'strainerClean', 'valvesSet', 'pipingSupported')
  w.put('bearingLubrication', { value: r.pick(['lubricated', 'sealed']) })
  yes(w, 'couplingGuardFitted')
  w.put('alignmentMethod', { value: k.alignmentMethod ?? r.pick(['laser', 'laser', 'dial']) })
  const sign = () => (r.next() < 0.5 ? -1 : 1)
  w.num('offsetVertical', sign() * r.between(0.2, 1.4))
  w.num('offsetHorizontal', sign() * r.between(0.1, 1.2))
  w.num('angularityVertical', sign() * r.between(0.02, 0.18))
  w.num('angularityHorizontal', sign() * r.between(0.02, 0.16))
  w.num('softFoot', k.softFoot ?? r.between(0.3, 0.8))
  yes(w, 'motorRotationUncoupled', 'pumpRotationCorrect')
  const f = k.flowFactor ?? r.between(0.975, 1.03)
  w.num('pumpFlow', flow * f)
  // Along the curve the head falls a little as the flow rises past design.
  const suction = w.num('suctionPressure', r.between(18, 32))
  w.num('dischargePressure', suction + headPsi * (1 - (f - 1) * 0.6) * r.between(0.985, 1.015))
  w.num('shaftSpeed', speed * r.between(0.997, 1.003), 'rpm', 0)
  const vAvg = volts * r.between(0.995, 1.025)
  const [va, vb, vc] = threePhase(r, vAvg, r.between(0.2, 0.6))
  w.num('pumpVoltsAB', va, 'V', 0)
  w.num('pumpVoltsBC', vb, 'V', 0)
  w.num('pumpVoltsCA', vc, 'V', 0)
  const amps = fla * (k.ampsFactor ?? r.between(0.82, 0.93))
  const [ia, ib, ic] = threePhase(r, amps, r.between(0.5, 2))
  const cap = k.ampsFactor && k.ampsFactor > 1 ? Infinity : fla
  w.num('pumpAmpsA', Math.min(ia, cap), 'A', 1)
  w.num('pumpAmpsB', Math.min(ib, cap), 'A', 1)
  w.num('pumpAmpsC', Math.min(ic, cap), 'A', 1)
  const bearings = ['vibMotorOutboard', 'vibMotorInboard', 'vibPumpInboard', 'vibPumpOutboard']
  const worst = k.vibrationWorst === undefined ? null : 'vibPumpInboard'
  for (const id of bearings) w.num(id, id === worst ? k.vibrationWorst! : r.between(0.025, 0.075), 'inps', system === 'IP' ? 3 : 1)
  yes(w, 'noCavitationNoise')
  w.put('sealLeakage', { value: 'none' })
  yes(w, 'strainerRecheckExplained')
  return { entries: ordered(definition, w.entries) }
}
