import { hasCriterion } from '../../shared/record/counting'
import { describe, expect, it } from 'vitest'
import { KW_PER_TON, saturationPressurePsig } from '../../shared/engineering'
import { STARTER_LIBRARY, type StarterTemplate } from '../../shared/library'
import { evaluateChecklist, evaluateField, parseExpression, type Verdict } from '../../shared/rules'
import { listFields, validateChecklistDefinition, type ChecklistDefinition, type ChecklistField } from '../../shared/schemas/checklist'
import { designPointKeysFor, designPointSchema, pumpDesignPointSchema, type DesignPoint, type PumpDesignPoint } from '../../shared/schemas/design-point'
import type { FieldEntry } from '../../shared/schemas/reading'
import { templateCreateSchema } from '../../shared/schemas/template'
import { diffDefinitions } from '../../shared/templates'
import { designPoint as fixtureDesignPoint } from './fixtures'

// The starter library (issue #4): every rule of both templates is fed readings and its verdict checked, against an
// invented machine and pump whose numbers are worked out beside them. Sources: REFERENCES.md section numbers,
// NEMA MG 1, AHRI 550/590 [M], and common practice [CP] as the templates' help text states it.

const template = (key: string): StarterTemplate => {
  const t = STARTER_LIBRARY.find((x) => x.key === key)
  if (!t) throw new Error(`no template ${key}`)
  return t
}
const chiller = template('centrifugal-chiller-startup')
const pump = template('pump-startup')

function fieldIn(def: ChecklistDefinition, id: string): ChecklistField {
  const hit = listFields(def).find((f) => f.field.id === id)
  if (!hit) throw new Error(`no field ${id}`)
  return hit.field
}

// 500 tons at the AHRI 550/590 I-P rating conditions (REFERENCES.md §1): 54 → 44 °F at 1200 gpm (2.4 gpm/ton),
// condenser 85 → 94.3 °F at 1500 gpm (3.0 gpm/ton), R-134a, 0.576 kW/ton (288 kW), 460 V, 420 A full load,
// 35 psid oil pressure setpoint (REFERENCES.md §7), 20 / 18 ft of water barrel drops, setpoints allowed 40–55 °F.
const chillerDesign: DesignPoint = {
  ...fixtureDesignPoint,
  evaporatorPressureDrop: { value: 20, unit: 'ftH2O' },
  condenserPressureDrop: { value: 18, unit: 'ftH2O' },
  frequency: { value: 60, unit: 'Hz' },
  chilledWaterSetpointMin: { value: 40, unit: 'degF' },
  chilledWaterSetpointMax: { value: 55, unit: 'degF' },
}

// The condenser-water pump of that machine: 1500 gpm at 65 ft of water (28.185 psid: 65 × 2.989067 / 6.894757,
// NIST SP 811), 40 hp four-pole motor, 1780 rpm rated, 460 V / 60 Hz, 48 A full load.
const pumpDesign: PumpDesignPoint = {
  pumpService: 'condenser_water',
  pumpDesignFlow: { value: 1500, unit: 'gpm' },
  pumpDesignHead: { value: 65, unit: 'ftH2O' },
  motorRatedPower: { value: 40, unit: 'hp' },
  motorRatedSpeed: { value: 1780, unit: 'rpm' },
  voltage: { value: 460, unit: 'V' },
  frequency: { value: 60, unit: 'Hz' },
  fullLoadAmps: { value: 48, unit: 'A' },
}

const yes = { value: true }
const q = (value: number, unit: string): FieldEntry => ({ value, unit })
/** Evaporator or condenser pressure in psig at which R-134a saturates at `tempF` (the shipped table, REFERENCES.md §5). */
const r134a = (tempF: number) => q(saturationPressurePsig('R-134a', tempF), 'psig')

// A good oil-pressure rise: 35 psid reached at 13.75 s, drive started at 40 s (26.25 s hold), never below 35 after.
const goodRamp: FieldEntry = { value: [[0, 0], [5, 12], [10, 28], [15, 36], [20, 38], [40, 38], [45, 37], [60, 37]], unit: 'psid', driveStartS: 40 }
// The same capture without the drive start marked: the pre-lubrication time then comes from the stopwatch.
const unmarkedRamp: FieldEntry = { value: (goodRamp as { value: unknown }).value, unit: 'psid' } as FieldEntry

// A full-load start-up that passes everywhere. Water-side heat with IAPWS-IF97 properties at the mean water temperature
// (docs/REFERENCES.md §Water properties and water-side heat): evaporator 1200 gpm × 10 °F at 49 °F mean, ρ 999.73 kg/m³,
// cp 4.1962 kJ/(kg·K): 0.075708 m³/s × 999.73 × 4.1962 × 5.5556 K = 1764.5 kW = 501.7 tons (the "500 rule" gives 500.0);
// 288 / 501.7 = 0.574 kW/ton; condenser 1500 gpm × 9.3 °F at 89.65 °F mean (ρ 995.0, cp 4.178): 2032.6 kW; heat
// balance (1764.5 + 288 − 2032.6) / 2032.6 = +0.98 %.
const GOOD_CHILLER: Record<string, FieldEntry> = {
  chwPressureDrop: q(20.5, 'ftH2O'), cwPressureDrop: q(17.6, 'ftH2O'),
  oilHeaterHours: q(26, 'h'),
  starterCoolantLevel: { value: 'at_mark' }, starterCoolingSource: { value: 'condenser_water' }, couplingGuard: { value: 'in_place' },
  oilPressureRamp: goodRamp, oilPressureAtDriveStart: q(38, 'psid'), prelubeTime: q(40, 's'), starterRampTime: q(4.5, 's'),
  voltsAB: q(460, 'V'), voltsBC: q(462, 'V'), voltsCA: q(458, 'V'),
  ampsA: q(400, 'A'), ampsB: q(405, 'A'), ampsC: q(398, 'A'), inputKw: q(288, 'kW'),
  oilPressureRunning: q(38, 'psid'), oilTempRunning: q(135, 'degF'),
  capacityControl: { value: 'full' }, condenserControl: { value: 'design' }, loadAmpsPct: q(97, '%'), barometricPressure: q(29.92, 'inHgAbs'),
  chwEntering: q(54, 'degF'), chwLeaving: q(44, 'degF'), chwFlow: q(1200, 'gpm'), evapPressure: r134a(42),
  cwEntering: q(85, 'degF'), cwLeaving: q(94.3, 'degF'), cwFlow: q(1500, 'gpm'), condPressure: r134a(96.5),
  chwSetpoint: q(44, 'degF'),
  chwFlowLossTime: q(3, 's'), cwFlowLossTime: q(3.5, 's'),
  lowEvapSetting: q(34, 'degF'), lowEvapTestSetting: q(38, 'degF'), lowEvapTripValue: q(38.3, 'degF'),
  highCondSetting: q(170, 'psig'), highCondTripValue: q(169, 'psig'),
  lowOilSetting: q(15, 'psid'), lowOilTripValue: q(15.3, 'psid'),
  safetyTestNotes: { value: 'All four trips made at the first attempt.' },
  trainingTopics: { value: 'Starting and stopping, alarms, safeties, daily log, standby lubrication, seasonal shutdown.' },
  trainingAttendees: { value: 'Two operators and the facilities manager.' },
  trainingGivenBy: { value: 'Start-up technician' },
  trainingHours: q(3, 'h'),
  attendanceSheet: { value: ['attachment-1'] },
  taskHandTurning: { value: 'explained' }, taskStarterCoolant: { value: 'explained' },
  handoverNotes: { value: 'Oil sample kit left with the operators.' },
}
for (const { field } of listFields(chiller.definition)) if (field.kind === 'yes_no') GOOD_CHILLER[field.id] = yes

const GOOD_PUMP: Record<string, FieldEntry> = {
  bearingLubrication: { value: 'lubricated' }, alignmentMethod: { value: 'laser' },
  offsetVertical: q(1.5, 'mil'), offsetHorizontal: q(-0.8, 'mil'), angularityVertical: q(0.2, 'milPerIn'), angularityHorizontal: q(-0.1, 'milPerIn'),
  softFoot: q(0.5, 'mil'), alignmentReport: { value: ['attachment-2'] },
  pumpFlow: q(1500, 'gpm'), suctionPressure: q(20, 'psig'), dischargePressure: q(48.2, 'psig'), shaftSpeed: q(1785, 'rpm'),
  pumpVoltsAB: q(460, 'V'), pumpVoltsBC: q(462, 'V'), pumpVoltsCA: q(458, 'V'),
  pumpAmpsA: q(46, 'A'), pumpAmpsB: q(46.5, 'A'), pumpAmpsC: q(45.5, 'A'),
  vibMotorOutboard: q(0.06, 'inps'), vibMotorInboard: q(0.05, 'inps'), vibPumpInboard: q(0.07, 'inps'), vibPumpOutboard: q(0.08, 'inps'),
  sealLeakage: { value: 'none' }, pumpNotes: { value: 'Strainer basket cleaned after the flush.' },
}
for (const { field } of listFields(pump.definition)) if (field.kind === 'yes_no') GOOD_PUMP[field.id] = yes

/** [field id, readings that differ from the good run, expected verdict, source of the limit]. */
type Case = [string, Record<string, FieldEntry>, Verdict, string]

const DROP = 'design ±20 %, marginal beyond ±10 % [CP]'
const VOLT = 'design 460 V ±10 % (NEMA MG 1), marginal beyond ±5 % [CP]'
const AMPS = 'design 420 A full load, marginal up to +5 %, fail beyond [CP]'
const TRIP = 'machine stops within 15 s of losing flow, marginal above 6 s [CP]'

const CHILLER_CASES: Case[] = [
  ['chwPressureDrop', {}, 'pass', DROP],
  ['chwPressureDrop', { chwPressureDrop: q(23, 'ftH2O') }, 'marginal', DROP],
  ['chwPressureDrop', { chwPressureDrop: q(17, 'ftH2O') }, 'marginal', DROP],
  ['chwPressureDrop', { chwPressureDrop: q(25, 'ftH2O') }, 'fail', DROP],
  ['chwPressureDrop', { chwPressureDrop: q(15, 'ftH2O') }, 'fail', DROP],
  ['cwPressureDrop', {}, 'pass', DROP],
  ['cwPressureDrop', { cwPressureDrop: q(20, 'ftH2O') }, 'marginal', DROP],
  ['cwPressureDrop', { cwPressureDrop: q(22, 'ftH2O') }, 'fail', DROP],
  ['oilHeaterHours', {}, 'pass', 'heater on at least 12 h, 24 h asked by many machines [CP]'],
  ['oilHeaterHours', { oilHeaterHours: q(18, 'h') }, 'marginal', 'heater on at least 12 h, 24 h asked by many machines [CP]'],
  ['oilHeaterHours', { oilHeaterHours: q(8, 'h') }, 'fail', 'heater on at least 12 h [CP]'],
  ['starterCoolantLevel', {}, 'pass', 'coolant at its mark [CP]'],
  ['starterCoolantLevel', { starterCoolantLevel: { value: 'air_cooled' } }, 'pass', 'no coolant on an air-cooled starter'],
  ['starterCoolantLevel', { starterCoolantLevel: { value: 'low' } }, 'fail', 'coolant at its mark [CP]'],
  ['starterCoolingSource', {}, 'pass', 'starter coolant cooled by condenser water (REFERENCES.md §7)'],
  ['starterCoolingSource', { starterCoolingSource: { value: 'chilled_water' } }, 'fail', 'chilled water lets the starter sweat (REFERENCES.md §7)'],
  ['couplingGuard', {}, 'pass', '29 CFR 1910.219'],
  ['couplingGuard', { couplingGuard: { value: 'hermetic' } }, 'pass', 'a hermetic motor has no coupling'],
  ['couplingGuard', { couplingGuard: { value: 'missing' } }, 'fail', '29 CFR 1910.219'],
  // Oil-pressure ramp: 35 psid within 30 s, hold 20 s before the drive, floor 25, warning 30 (REFERENCES.md §7 [CP]).
  ['oilPressureRamp', {}, 'pass', 'proving hold of about 20 s before the drive (REFERENCES.md §7)'],
  ['oilPressureRamp', { oilPressureRamp: { value: [[0, 0], [10, 28], [15, 36], [40, 38], [50, 28], [60, 36]], unit: 'psid', driveStartS: 40 } }, 'marginal', 'dip to 28 psid after the drive start: below the 30 psid warning, above the 25 psid floor [CP]'],
  ['oilPressureRamp', { oilPressureRamp: { value: [[0, 0], [10, 28], [15, 36], [25, 38], [60, 38]], unit: 'psid', driveStartS: 25 } }, 'fail', 'drive started 11.25 s after the setpoint, short of the 20 s hold (REFERENCES.md §7)'],
  ['oilPressureRamp', { oilPressureRamp: { value: [[0, 0], [20, 20], [40, 30], [60, 34]], unit: 'psid', driveStartS: 60 } }, 'fail', 'never reached 35 psid [CP]'],
  ['oilPressureRamp', { oilPressureRamp: { value: [[0, 0], [10, 28], [15, 36], [40, 38], [50, 22], [60, 36]], unit: 'psid', driveStartS: 40 } }, 'fail', 'fell to 22 psid, below the 25 psid floor [CP]'],
  ['oilPressureAtDriveStart', {}, 'pass', 'at or above the 35 psid setpoint of the design point'],
  ['oilPressureAtDriveStart', { oilPressureAtDriveStart: q(35, 'psid') }, 'pass', 'exactly the setpoint: limits are inclusive'],
  ['oilPressureAtDriveStart', { oilPressureAtDriveStart: q(33, 'psid') }, 'fail', 'below the design setpoint'],
  ['prelubeTime', {}, 'pass', 'at least the 20 s hold (REFERENCES.md §7)'],
  ['prelubeTime', { prelubeTime: q(75, 's'), oilPressureRamp: unmarkedRamp }, 'marginal', 'stopwatch (no drive start on the capture): above 60 s [CP]'],
  ['prelubeTime', { prelubeTime: q(130, 's'), oilPressureRamp: unmarkedRamp }, 'fail', 'above 120 s [CP]'],
  ['prelubeTime', { prelubeTime: q(15, 's'), oilPressureRamp: unmarkedRamp }, 'fail', 'shorter than the 20 s hold (REFERENCES.md §7)'],
  ['prelubeTime', { prelubeTime: q(15, 's'), oilPressureRamp: { ...goodRamp, driveStartS: 70 } as FieldEntry }, 'marginal', 'the capture marks the drive start at 70 s: above 60 s, whatever the stopwatch said'],
  ['starterRampTime', {}, 'pass', '3.5–5 s quoted for soft starters (REFERENCES.md §7)'],
  ['starterRampTime', { starterRampTime: q(2.5, 's') }, 'marginal', 'below 3 s [CP]'],
  ['starterRampTime', { starterRampTime: q(9, 's') }, 'marginal', 'above 8 s [CP]'],
  ['starterRampTime', { starterRampTime: q(14, 's') }, 'fail', 'above 12 s [CP]'],
  ['starterRampTime', { starterRampTime: q(1.5, 's') }, 'fail', 'below 2 s [CP]'],
  ...(['voltsAB', 'voltsBC', 'voltsCA'] as const).flatMap((id): Case[] => [
    [id, {}, 'pass', VOLT],
    [id, { [id]: q(490, 'V') }, 'marginal', VOLT],
    [id, { [id]: q(430, 'V') }, 'marginal', VOLT],
    [id, { [id]: q(510, 'V') }, 'fail', VOLT],
    [id, { [id]: q(410, 'V') }, 'fail', VOLT],
  ]),
  ['voltageUnbalance', {}, 'pass', '460/462/458 V: 2 / 460 = 0.43 % (NEMA MG 1)'],
  ['voltageUnbalance', { voltsAB: q(460, 'V'), voltsBC: q(467, 'V'), voltsCA: q(450, 'V') }, 'marginal', 'NEMA MG 1 worked example 1.96 %, above 1 % derating (REFERENCES.md §3)'],
  ['voltageUnbalance', { voltsAB: q(470, 'V'), voltsBC: q(450, 'V'), voltsCA: q(455, 'V') }, 'fail', '11.67 / 458.3 = 2.55 %, above 2 % [CP]'],
  ...(['ampsA', 'ampsB', 'ampsC'] as const).flatMap((id): Case[] => [
    [id, {}, 'pass', AMPS],
    [id, { [id]: q(430, 'A') }, 'marginal', AMPS],
    [id, { [id]: q(445, 'A') }, 'fail', AMPS],
  ]),
  ['currentUnbalance', {}, 'pass', '400/405/398 A: 4 / 401 = 1.0 % (NEMA MG 1 method)'],
  ['currentUnbalance', { ampsA: q(380, 'A'), ampsB: q(440, 'A'), ampsC: q(400, 'A') }, 'marginal', '33.3 / 406.7 = 8.2 %, within 10 % at full load (REFERENCES.md §3 [CP])'],
  ['currentUnbalance', { ampsA: q(340, 'A'), ampsB: q(420, 'A'), ampsC: q(410, 'A') }, 'fail', '50 / 390 = 12.8 %, above 10 % (REFERENCES.md §3 [CP])'],
  ['oilPressureRunning', {}, 'pass', 'at or above the 35 psid design setpoint'],
  ['oilPressureRunning', { oilPressureRunning: q(32, 'psid') }, 'marginal', 'up to 15 % below the setpoint (29.75 psid) [CP]'],
  ['oilPressureRunning', { oilPressureRunning: q(28, 'psid') }, 'fail', 'more than 15 % below the setpoint [CP]'],
  ['oilPressureRunning', { oilPressureRunning: q(48, 'psid') }, 'marginal', 'more than 30 % above (45.5 psid) [CP]'],
  ['oilPressureRunning', { oilPressureRunning: q(55, 'psid') }, 'fail', 'more than 50 % above (52.5 psid) [CP]'],
  ['oilTempRunning', {}, 'pass', '110–150 °F [CP]'],
  ['oilTempRunning', { oilTempRunning: q(105, 'degF') }, 'marginal', '100–110 °F [CP]'],
  ['oilTempRunning', { oilTempRunning: q(155, 'degF') }, 'marginal', '150–165 °F [CP]'],
  ['oilTempRunning', { oilTempRunning: q(95, 'degF') }, 'fail', 'below 100 °F [CP]'],
  ['oilTempRunning', { oilTempRunning: q(170, 'degF') }, 'fail', 'above 165 °F [CP]'],
  ['chwEntering', { chwEntering: q(56.5, 'degF') }, 'recorded', 'set by the building load: recorded against design 54 °F, not judged'],
  ['chwLeaving', { chwLeaving: q(44.3, 'degF') }, 'pass', 'design 44 °F ±1, marginal beyond ±0.5 [CP]'],
  ['chwLeaving', { chwLeaving: q(44.8, 'degF') }, 'marginal', 'design 44 °F ±1, marginal beyond ±0.5 [CP]'],
  ['chwLeaving', { chwLeaving: q(45.2, 'degF') }, 'fail', 'design 44 °F ±1 [CP]'],
  ['chwLeaving', { chwLeaving: q(42.9, 'degF') }, 'fail', 'design 44 °F ±1 [CP]'],
  ['chwFlow', {}, 'pass', 'design 1200 gpm ±10 %, marginal beyond ±5 % [CP]'],
  ['chwFlow', { chwFlow: q(1130, 'gpm') }, 'marginal', 'below 1140 gpm (−5 %) [CP]'],
  ['chwFlow', { chwFlow: q(1070, 'gpm') }, 'fail', 'below 1080 gpm (−10 %) [CP]'],
  ['chwFlow', { chwFlow: q(1330, 'gpm') }, 'fail', 'above 1320 gpm (+10 %) [CP]'],
  ['evapSatTemp', {}, 'pass', 'R-134a at 37.0 psig saturates at 42 °F (REFERENCES.md §5 table), above 35 °F [CP]'],
  ['evapSatTemp', { evapPressure: r134a(34) }, 'marginal', '34 °F: above 33, below 35 °F [CP]'],
  ['evapSatTemp', { evapPressure: r134a(30) }, 'fail', '30 °F: below 33 °F with plain water [CP]'],
  ['evapApproach', {}, 'pass', '44 − 42 = 2 °F, within 0.5–3 °F for a clean machine (REFERENCES.md §5 [CP])'],
  ['evapApproach', { evapPressure: r134a(40.5) }, 'marginal', '44 − 40.5 = 3.5 °F, above 3 °F (REFERENCES.md §5 [CP])'],
  ['evapApproach', { evapPressure: r134a(38.5) }, 'fail', '44 − 38.5 = 5.5 °F, above 5 °F [CP]'],
  ['evapApproach', { evapPressure: r134a(44.5) }, 'fail', 'negative approach: a reading is wrong'],
  ['evapApproach', { chwLeaving: q(42, 'degF'), chwEntering: q(52, 'degF'), evapPressure: q(35, 'psig') }, 'pass', 'REFERENCES.md §5 case: 35.0 psig saturates at 39.95 °F, approach 2.05 °F [C]'],
  ['capacity', {}, 'pass', '501.7 tons at full capacity against design 500 (IF97 properties; REFERENCES.md test conditions)'],
  ['capacity', { chwLeaving: q(44.5, 'degF') }, 'marginal', '≈476.8 tons, 95.4 % load: AHRI tolerance 10.5 − 6.68 + 1500/954 = 5.40 % → fails below 473.0, marginal below 486.5 [CP half share]'],
  ['capacity', { chwLeaving: q(44.8, 'degF') }, 'fail', '≈461.8 tons, 92.4 % load: tolerance 5.65 % → fails below 471.7 tons'],
  ['capacity', { chwLeaving: q(44.8, 'degF'), capacityControl: { value: 'following' } }, 'recorded', 'following the building load: recorded with its load, not judged'],
  ['capacity', { capacityControl: { value: 'limited' } }, 'recorded', 'held below full capacity by a limit: recorded, not judged'],
  ['cwEntering', { cwEntering: q(83.8, 'degF') }, 'recorded', 'set by the tower: 1.2 °F colder than design is recorded, not a chiller fault'],
  ['cwLeaving', { cwLeaving: q(92, 'degF') }, 'recorded', 'follows the tower and the load: recorded against design 94.3 °F'],
  ['cwFlow', {}, 'pass', 'design 1500 gpm ±10 %, marginal beyond ±5 % [CP]'],
  ['cwFlow', { cwFlow: q(1420, 'gpm') }, 'marginal', 'below 1425 gpm (−5 %) [CP]'],
  ['cwFlow', { cwFlow: q(1340, 'gpm') }, 'fail', 'below 1350 gpm (−10 %) [CP]'],
  ['condApproach', {}, 'pass', '96.5 − 94.3 = 2.2 °F (REFERENCES.md §5 [CP])'],
  ['condApproach', { condPressure: r134a(98) }, 'marginal', '98 − 94.3 = 3.7 °F, above 3 °F [CP]'],
  ['condApproach', { cwLeaving: q(97.5, 'degF'), condPressure: q(124, 'psig') }, 'pass', 'REFERENCES.md §5 case: 124.0 psig saturates at 99.93 °F, approach 2.43 °F [C]'],
  ['condApproach', { condPressure: r134a(100) }, 'fail', '100 − 94.3 = 5.7 °F, above 5 °F [CP]'],
  ['condApproach', { condPressure: r134a(94) }, 'fail', 'negative approach: a reading is wrong'],
  ['specificPower', {}, 'pass', '288 / 501.7 = 0.574 kW/ton, below the design 0.576 (REFERENCES.md test conditions)'],
  ['specificPower', { inputKw: q(300, 'kW') }, 'marginal', '300 / 501.7 = 0.598, above half the 5 % full-load tolerance (0.5904) [CP]'],
  ['specificPower', { inputKw: q(310, 'kW') }, 'fail', '310 / 501.7 = 0.618, above 0.576 × 1.05 = 0.6048 (AHRI 550/590 at full load)'],
  ['specificPower', { chwLeaving: q(47, 'degF'), capacityControl: { value: 'following' } }, 'recorded', 'about 70 % load, below the 75 % the rule judges at: recorded'],
  ['heatBalance', {}, 'pass', '(1764.5 + 288 − 2032.6) / 2032.6 = +0.98 % (AHRI 550/590 ±5 % [M])'],
  ['heatBalance', { cwFlow: q(1444, 'gpm') }, 'marginal', 'condenser 1444 gpm ≈ 1956.7 kW → +4.9 %, beyond ±3 % [CP]'],
  ['heatBalance', { cwFlow: q(1380, 'gpm') }, 'fail', 'condenser ≈ 1870 kW → +9.8 %, beyond ±5 % [M]'],
  ['heatBalance', { cwFlow: q(1600, 'gpm') }, 'fail', 'condenser ≈ 2168 kW → −5.3 %, beyond ±5 % [M]'],
  ['chwSetpoint', {}, 'pass', '38–55 °F for plain water (REFERENCES.md §7)'],
  ['chwSetpoint', { chwSetpoint: q(39, 'degF') }, 'marginal', '38–40 °F: near freeze protection [CP]'],
  ['chwSetpoint', { chwSetpoint: q(37, 'degF') }, 'fail', 'below 38 °F needs freeze protection (REFERENCES.md §7)'],
  ['chwSetpoint', { chwSetpoint: q(56, 'degF') }, 'fail', 'above 55 °F (REFERENCES.md §7)'],
  ['chwSetpointAboveMin', {}, 'pass', '44 − 40 = 4 °F above the design point lowest setpoint'],
  ['chwSetpointAboveMin', { chwSetpoint: q(39, 'degF') }, 'fail', '39 − 40 = −1 °F: below the machine lowest setpoint'],
  ['chwSetpointBelowMax', {}, 'pass', '55 − 44 = 11 °F below the design point highest setpoint'],
  ['chwSetpointBelowMax', { chwSetpoint: q(55.5, 'degF') }, 'fail', '55 − 55.5 = −0.5 °F: above the machine highest setpoint'],
  ['chwFlowLossTime', {}, 'pass', TRIP],
  ['chwFlowLossTime', { chwFlowLossTime: q(8, 's') }, 'marginal', TRIP],
  ['chwFlowLossTime', { chwFlowLossTime: q(20, 's') }, 'fail', TRIP],
  ['cwFlowLossTime', {}, 'pass', TRIP],
  ['cwFlowLossTime', { cwFlowLossTime: q(0.1, 'min') }, 'pass', '0.1 min = 6 s: exactly the warning level, limits inclusive'],
  ['cwFlowLossTime', { cwFlowLossTime: q(0.12, 'min') }, 'marginal', '0.12 min = 7.2 s, above 6 s [CP]'],
  ['cwFlowLossTime', { cwFlowLossTime: q(16, 's') }, 'fail', TRIP],
  ['lowEvapSetting', {}, 'pass', 'not below 32 °F with plain water [CP]'],
  ['lowEvapSetting', { lowEvapSetting: q(30, 'degF') }, 'fail', 'below freezing with plain water [CP]'],
  ['lowEvapTripError', {}, 'pass', '38.3 − 38 = +0.3 °F [CP]'],
  ['lowEvapTripError', { lowEvapTripValue: q(37.3, 'degF') }, 'marginal', '0.7 °F late, beyond 0.5 °F [CP]'],
  ['lowEvapTripError', { lowEvapTripValue: q(36.8, 'degF') }, 'fail', '1.2 °F late, beyond 1 °F [CP]'],
  ['lowEvapTripError', { lowEvapTripValue: q(39.5, 'degF') }, 'marginal', '1.5 °F early, beyond 1 °F [CP]'],
  ['lowEvapTripError', { lowEvapTripValue: q(40.5, 'degF') }, 'fail', '2.5 °F early, beyond 2 °F [CP]'],
  ['highCondTripError', {}, 'pass', '169 vs 170 psig: −0.59 % [CP]'],
  ['highCondTripError', { highCondTripValue: q(173, 'psig') }, 'marginal', '+1.76 % late, beyond 1.5 % [CP]'],
  ['highCondTripError', { highCondTripValue: q(176, 'psig') }, 'fail', '+3.5 % late, beyond 3 % [CP]'],
  ['highCondTripError', { highCondTripValue: q(163, 'psig') }, 'marginal', '−4.1 % early, beyond 3 % [CP]'],
  ['highCondTripError', { highCondTripValue: q(160, 'psig') }, 'fail', '−5.9 % early, beyond 5 % [CP]'],
  ['lowOilTripError', {}, 'pass', '15.3 vs 15 psid: +2 % [CP]'],
  ['lowOilTripError', { lowOilTripValue: q(14.5, 'psid') }, 'marginal', '−3.3 % late, beyond 2.5 % [CP]'],
  ['lowOilTripError', { lowOilTripValue: q(14, 'psid') }, 'fail', '−6.7 % late, beyond 5 % [CP]'],
  ['lowOilTripError', { lowOilTripValue: q(16, 'psid') }, 'marginal', '+6.7 % early, beyond 5 % [CP]'],
  ['lowOilTripError', { lowOilTripValue: q(17, 'psid') }, 'fail', '+13.3 % early, beyond 10 % [CP]'],
  ['taskHandTurning', {}, 'pass', 'open drive turned by hand every 6 weeks to 2 months after lockout (REFERENCES.md §7)'],
  ['taskHandTurning', { taskHandTurning: { value: 'hermetic' } }, 'pass', 'hermetic motors cannot be hand-turned (REFERENCES.md §7)'],
  ['taskHandTurning', { taskHandTurning: { value: 'not_explained' } }, 'fail', 'the owner must keep the task (REFERENCES.md §7)'],
  ['taskStarterCoolant', {}, 'pass', 'yearly starter coolant change (REFERENCES.md §7)'],
  ['taskStarterCoolant', { taskStarterCoolant: { value: 'air_cooled' } }, 'pass', 'no coolant on an air-cooled starter'],
  ['taskStarterCoolant', { taskStarterCoolant: { value: 'not_explained' } }, 'fail', 'yearly starter coolant change (REFERENCES.md §7)'],
]

const PVOLT = 'design 460 V ±10 % (NEMA MG 1), marginal beyond ±5 % [CP]'
const PAMPS = 'design 48 A full load; into the 1.15 service factor marginal, beyond fail [CP]'
const OFFSET = '±4 mils up to 1800 rpm, marginal beyond ±2 [CP]'
const ANGLE = '±0.5 mils/in up to 1800 rpm, marginal beyond ±0.3 [CP]'
const VIB = 'up to 0.10 in/s RMS passes, up to 0.15 in/s marginal [CP]'

const PUMP_CASES: Case[] = [
  ['bearingLubrication', {}, 'pass', "manufacturer's lubrication [CP]"],
  ['bearingLubrication', { bearingLubrication: { value: 'sealed' } }, 'pass', 'sealed-for-life bearings need none'],
  ['bearingLubrication', { bearingLubrication: { value: 'not_done' } }, 'fail', "manufacturer's lubrication [CP]"],
  ['alignmentMethod', {}, 'pass', 'laser or dial indicators [CP]'],
  ['alignmentMethod', { alignmentMethod: { value: 'dial' } }, 'pass', 'laser or dial indicators [CP]'],
  ['alignmentMethod', { alignmentMethod: { value: 'straightedge' } }, 'marginal', 'a straightedge cannot resolve mils [CP]'],
  ['alignmentMethod', { alignmentMethod: { value: 'not_measured' } }, 'fail', 'alignment must be measured [CP]'],
  ...(['offsetVertical', 'offsetHorizontal'] as const).flatMap((id): Case[] => [
    [id, { [id]: q(1.5, 'mil') }, 'pass', OFFSET],
    [id, { [id]: q(-3, 'mil') }, 'marginal', OFFSET],
    [id, { [id]: q(0.1016, 'mm') }, 'marginal', '0.1016 mm = 4 mils exactly: at the limit, inclusive (NIST SP 811)'],
    [id, { [id]: q(4.5, 'mil') }, 'fail', OFFSET],
    [id, { [id]: q(-5, 'mil') }, 'fail', OFFSET],
  ]),
  ...(['angularityVertical', 'angularityHorizontal'] as const).flatMap((id): Case[] => [
    [id, { [id]: q(0.2, 'milPerIn') }, 'pass', ANGLE],
    [id, { [id]: q(-0.4, 'milPerIn') }, 'marginal', ANGLE],
    [id, { [id]: q(0.05, 'mmPer100mm') }, 'marginal', '0.05 mm/100 mm = 0.5 mils/in: at the limit, inclusive'],
    [id, { [id]: q(0.6, 'milPerIn') }, 'fail', ANGLE],
  ]),
  ['softFoot', {}, 'pass', '2 mils at most, marginal above 1 [CP]'],
  ['softFoot', { softFoot: q(1.5, 'mil') }, 'marginal', '2 mils at most, marginal above 1 [CP]'],
  ['softFoot', { softFoot: q(2.5, 'mil') }, 'fail', '2 mils at most [CP]'],
  ['pumpFlow', {}, 'pass', 'design 1500 gpm ±10 %, marginal beyond ±5 % [CP]'],
  ['pumpFlow', { pumpFlow: q(1400, 'gpm') }, 'marginal', 'below 1425 gpm [CP]'],
  ['pumpFlow', { pumpFlow: q(1340, 'gpm') }, 'fail', 'below 1350 gpm [CP]'],
  ['pumpFlow', { pumpFlow: q(1660, 'gpm') }, 'fail', 'above 1650 gpm [CP]'],
  ['pumpFlow', { pumpFlow: q(94.6, 'Lps') }, 'pass', '94.6 L/s = 1499 gpm (NIST SP 811: 1 gpm = 0.0630902 L/s)'],
  ['pumpDifferential', {}, 'pass', '48.2 − 20 = 28.2 psid vs design 65 ft = 28.185 psid (NIST SP 811), ±10 % [CP]'],
  ['pumpDifferential', { dischargePressure: q(46.5, 'psig') }, 'marginal', '26.5 psid: below −5 % (26.78) [CP]'],
  ['pumpDifferential', { dischargePressure: q(45, 'psig') }, 'fail', '25 psid: below −10 % (25.37) [CP]'],
  ['pumpDifferential', { dischargePressure: q(51.5, 'psig') }, 'fail', '31.5 psid: above +10 % (31.0) [CP]'],
  ['pumpDifferential', { suctionPressure: q(137.9, 'kPag'), dischargePressure: q(332.3, 'kPag') }, 'pass', '194.4 kPa = 28.2 psid (NIST SP 811: 1 psi = 6.894757 kPa)'],
  ['shaftSpeed', {}, 'pass', 'rated 1780 rpm, −3 % / +2 % [CP]'],
  ['shaftSpeed', { shaftSpeed: q(1799, 'rpm') }, 'pass', 'close to 1800 rpm synchronous at light load: +1.07 % [CP]'],
  ['shaftSpeed', { shaftSpeed: q(1745, 'rpm') }, 'marginal', '−1.97 %, beyond −1.5 % [CP]'],
  ['shaftSpeed', { shaftSpeed: q(1720, 'rpm') }, 'fail', '−3.4 %, beyond −3 % [CP]'],
  ['shaftSpeed', { shaftSpeed: q(1820, 'rpm') }, 'fail', '+2.25 %: faster than any four-pole motor at 60 Hz'],
  ...(['pumpVoltsAB', 'pumpVoltsBC', 'pumpVoltsCA'] as const).flatMap((id): Case[] => [
    [id, {}, 'pass', PVOLT],
    [id, { [id]: q(485, 'V') }, 'marginal', PVOLT],
    [id, { [id]: q(510, 'V') }, 'fail', PVOLT],
  ]),
  ['pumpVoltageUnbalance', { pumpVoltsAB: q(480, 'V'), pumpVoltsBC: q(476, 'V'), pumpVoltsCA: q(472, 'V') }, 'pass', '480/476/472 V: 0.84 % (REFERENCES.md §3 [C])'],
  ['pumpVoltageUnbalance', { pumpVoltsAB: q(462, 'V'), pumpVoltsBC: q(463, 'V'), pumpVoltsCA: q(455, 'V') }, 'marginal', '462/463/455 V: 1.087 % (REFERENCES.md §3, US DOE tip sheet [S])'],
  ['pumpVoltageUnbalance', { pumpVoltsAB: q(470, 'V'), pumpVoltsBC: q(450, 'V'), pumpVoltsCA: q(455, 'V') }, 'fail', '2.55 %, above 2 % [CP]'],
  ...(['pumpAmpsA', 'pumpAmpsB', 'pumpAmpsC'] as const).flatMap((id): Case[] => [
    [id, {}, 'pass', PAMPS],
    [id, { [id]: q(52, 'A') }, 'marginal', PAMPS],
    [id, { [id]: q(56, 'A') }, 'fail', PAMPS],
  ]),
  ['pumpCurrentUnbalance', {}, 'pass', '46/46.5/45.5 A: 1.1 % (NEMA MG 1 method)'],
  ['pumpCurrentUnbalance', { pumpAmpsA: q(42, 'A'), pumpAmpsB: q(48, 'A'), pumpAmpsC: q(46, 'A') }, 'marginal', '3.33 / 45.33 = 7.4 %, within 10 % (REFERENCES.md §3 [CP])'],
  ['pumpCurrentUnbalance', { pumpAmpsA: q(40, 'A'), pumpAmpsB: q(48, 'A'), pumpAmpsC: q(46, 'A') }, 'fail', '4.67 / 44.67 = 10.4 %, above 10 % (REFERENCES.md §3 [CP])'],
  ...(['vibMotorOutboard', 'vibMotorInboard', 'vibPumpInboard', 'vibPumpOutboard'] as const).flatMap((id): Case[] => [
    [id, { [id]: q(0.06, 'inps') }, 'pass', VIB],
    [id, { [id]: q(0.12, 'inps') }, 'marginal', VIB],
    [id, { [id]: q(3, 'mmps') }, 'marginal', '3 mm/s = 0.118 in/s (1 in = 25.4 mm) [CP]'],
    [id, { [id]: q(0.2, 'inps') }, 'fail', VIB],
    [id, { [id]: q(4, 'mmps') }, 'fail', '4 mm/s = 0.157 in/s, above 0.15 [CP]'],
  ]),
  ['sealLeakage', {}, 'pass', 'no visible leakage [CP]'],
  ['sealLeakage', { sealLeakage: { value: 'drops' } }, 'marginal', 'a new seal may weep at first [CP]'],
  ['sealLeakage', { sealLeakage: { value: 'steady' } }, 'fail', 'a steady leak is a failed seal [CP]'],
]

// Yes/no checks: yes passes, no fails. Listed by id so that a new question without a case fails the coverage test.
const CHILLER_YES_NO = [
  'safetyBriefing', 'manufacturerInstructions', 'supplyMatchesNameplate', 'phaseRotation', 'terminationsChecked', 'controlPowerHealthy',
  'chwPumpRunning', 'chwFlowProven', 'cwPumpRunning', 'cwFlowProven', 'waterBoxesVented', 'oilLevelOk', 'oilHeaterOn',
  'refrigerantMatchesNameplate', 'chargeRecorded', 'leakCheckClean', 'refrigerantDetectorTested', 'starterSettingsChecked',
  'safetiesInCircuit', 'safetySetpointsChecked', 'startWithoutTrouble', 'chwFlowLossTrip', 'cwFlowLossTrip',
  'restartBlockedWithoutFlow', 'lowEvapTrip', 'highCondTrip', 'lowOilTrip', 'settingsRestored', 'manualsHandedOver',
  'taskStandbyLubrication', 'taskTubeBrushing', 'taskOilFilter', 'taskOilAnalysis', 'taskLeakInspections',
]
const PUMP_YES_NO = [
  'pumpSafetyBriefing', 'systemFilledVented', 'strainerClean', 'valvesSet', 'pipingSupported', 'couplingGuardFitted',
  'motorRotationUncoupled', 'pumpRotationCorrect', 'noCavitationNoise', 'strainerRecheckExplained',
]
const yesNoCases = (ids: string[]): Case[] =>
  ids.flatMap((id): Case[] => [
    [id, { [id]: { value: true } }, 'pass', 'the check must be answered yes'],
    [id, { [id]: { value: false } }, 'fail', 'the check must be answered yes'],
  ])

const SUITES = [
  { name: 'chiller', t: chiller, design: chillerDesign as DesignPoint | PumpDesignPoint, good: GOOD_CHILLER, cases: [...CHILLER_CASES, ...yesNoCases(CHILLER_YES_NO)] },
  { name: 'pump', t: pump, design: pumpDesign as DesignPoint | PumpDesignPoint, good: GOOD_PUMP, cases: [...PUMP_CASES, ...yesNoCases(PUMP_YES_NO)] },
]

describe('starter library: the templates themselves', () => {
  it('when the library is listed, then it holds the chiller and the pump templates, keyed and described', () => {
    expect(STARTER_LIBRARY.map((t) => [t.key, t.equipmentKind])).toEqual([
      ['centrifugal-chiller-startup', 'centrifugal_chiller'],
      ['pump-startup', 'pump'],
    ])
    for (const t of STARTER_LIBRARY) {
      expect(t.name.length).toBeGreaterThan(10)
      expect(t.description.length).toBeGreaterThan(40)
      expect(t.changelog.length).toBeGreaterThan(20)
    }
  })
  it.each(STARTER_LIBRARY.map((t) => [t.key, t]))('when %s is validated, then the checklist schema finds no problem', async (_k, t) => {
    const result = await validateChecklistDefinition(t.definition)
    expect(result.errors).toEqual([])
    expect(result.valid).toBe(true)
  })
  it.each(STARTER_LIBRARY.map((t) => [t.key, t]))('when %s is created through the template API schema, then key, name and kind are accepted', (_k, t) => {
    expect(() => templateCreateSchema.validateSync({ key: t.key, name: t.name, equipmentKind: t.equipmentKind, description: t.description, definition: t.definition })).not.toThrow()
  })
  it.each(STARTER_LIBRARY.map((t) => [t.key, t]))('when %s names design values, then each belongs to its equipment kind', (_k, t) => {
    const allowed = new Set<string>(designPointKeysFor(t.equipmentKind))
    const used = new Set<string>()
    for (const { field } of listFields(t.definition)) {
      if (field.rule && (field.rule.type === 'design' || field.rule.type === 'design_offset')) used.add(field.rule.key)
      if (field.computed) parseExpression(field.computed.expression).designRefs.forEach((k) => used.add(k))
    }
    expect(used.size).toBeGreaterThan(3)
    for (const key of used) expect(allowed.has(key), key).toBe(true)
  })
  it.each(STARTER_LIBRARY.map((t) => [t.key, t]))('when %s has a numeric limit, then the help text states its basis (common practice, a standard or the design point)', (_k, t) => {
    for (const { field } of listFields(t.definition)) {
      if (!field.rule || ['yes_no', 'choice'].includes(field.rule.type)) continue
      expect(field.help, field.id).toMatch(/common practice|NEMA MG 1|AHRI 550\/590|design point/i)
      // A fixed limit is a default unless it is measured from a design value inside the expression.
      const fromDesign = field.computed !== undefined && parseExpression(field.computed.expression).designRefs.some((k) => k !== 'refrigerant')
      if ((field.rule.type === 'range' || field.rule.type === 'ramp') && !fromDesign) expect(field.help, field.id).toMatch(/common practice/i)
    }
  })
  it('when the chiller pre-start opens, then the safety cautions (README.md, Safety) are shown and defer to the manufacturer, codes and licensed practice', () => {
    const step = chiller.definition.sections[0].steps[0]
    const all = (step.cautions ?? []).join(' ')
    for (const pattern of [/lock out and tag out/i, /arc-flash/i, /certified/i, /never bypass/i, /couplings/i, /manufacturer's start-up instructions, local codes and licensed practice/]) expect(all).toMatch(pattern)
  })
  it.each([
    ['chiller', 'motor-supply'],
    ['pump', 'pump-electrical'],
  ])('when the %s %s step takes live readings, then the arc-flash caution is on it', (name, stepId) => {
    const def = name === 'chiller' ? chiller.definition : pump.definition
    const step = def.sections.flatMap((s) => s.steps).find((s) => s.id === stepId)!
    expect((step.cautions ?? []).join(' ')).toMatch(/NFPA 70E/)
  })
  it('when the maintenance handover is read, then it covers the recurring tasks of REFERENCES.md §7', () => {
    const labels = chiller.definition.sections.find((s) => s.id === 'handover')!.steps.flatMap((s) => s.fields.map((f) => `${f.label} ${(f.choices ?? []).map((c) => c.label).join(' ')}`)).join(' | ')
    for (const pattern of [/90 s every 24 h/, /by hand every 6 weeks to 2 months/, /after lockout/, /brush the condenser and evaporator tubes/, /oil filter/, /starter coolant/, /oil sample/]) expect(labels).toMatch(pattern)
  })
  it('when a template is compared with itself, then the diff is empty (the library is data the diff can read)', () => {
    for (const t of STARTER_LIBRARY) expect(diffDefinitions(t.definition, structuredClone(t.definition)).entries).toEqual([])
  })
  it('when the invented design points are validated, then both pass their kind’s schema', () => {
    expect(() => designPointSchema.validateSync(chillerDesign)).not.toThrow()
    expect(() => pumpDesignPointSchema.validateSync(pumpDesign)).not.toThrow()
  })
})

for (const suite of SUITES) {
  describe(`starter library: every rule of the ${suite.name} template against readings`, () => {
    const def = suite.t.definition
    const context = (overrides: Record<string, FieldEntry>) => {
      const readings = { ...suite.good, ...overrides }
      return { readings, ctx: { unitSystem: 'IP' as const, designPoint: suite.design, definition: def, readings } }
    }

    it.each(suite.cases)('when %s is judged with %j, then it is %s (%s)', (id, overrides, verdict) => {
      const { readings, ctx } = context(overrides)
      const r = evaluateField(fieldIn(def, id), readings[id], ctx)
      expect(r.verdict, r.message).toBe(verdict)
      if (process.env.SHOW_MESSAGES) console.log(id, r.verdict, r.message)
    })

    it('when every rule-bearing field is listed, then each has cases for pass and fail, and marginal where it has a warning band', () => {
      const seen = new Map<string, Set<Verdict>>()
      for (const [id, , verdict] of suite.cases) seen.set(id, (seen.get(id) ?? new Set()).add(verdict))
      const missing: string[] = []
      for (const { field } of listFields(def)) {
        const rule = field.rule
        if (!rule) continue
        const needed: Verdict[] = ['pass']
        if (rule.type === 'design_reference') {
          needed.splice(0, 1, 'recorded')
        } else if (rule.type === 'choice') {
          if ((rule.marginal ?? []).length) needed.push('marginal')
          if ((field.choices ?? []).some((c) => !rule.pass.includes(c.value) && !(rule.marginal ?? []).includes(c.value))) needed.push('fail')
        } else {
          needed.push('fail')
          const r = rule as Record<string, unknown>
          if (rule.type === 'rated_at_load') needed.push('marginal', 'recorded')
          if (['warnMin', 'warnMax', 'warnTolerance', 'warnTolerancePct', 'warnLowerPct', 'warnUpperPct', 'warnLower', 'warnUpper', 'warnFloor'].some((k) => r[k] !== undefined)) needed.push('marginal')
        }
        for (const v of needed) if (!seen.get(field.id)?.has(v)) missing.push(`${field.id}: ${v}`)
      }
      expect(missing).toEqual([])
      // And no case names a field the template does not have.
      const ids = new Set(listFields(def).map((f) => f.field.id))
      expect([...seen.keys()].filter((id) => !ids.has(id))).toEqual([])
    })

    it('when a good start-up is recorded in full, then every judged field passes and every field without a criterion is recorded', () => {
      const all = evaluateChecklist(def, { unitSystem: 'IP', designPoint: suite.design, readings: suite.good })
      const byId = new Map(listFields(def).map((f) => [f.field.id, f.field]))
      const wrong = Object.values(all)
        .filter((e) => e.verdict !== (hasCriterion(byId.get(e.fieldId)!) ? 'pass' : 'recorded'))
        .map((e) => `${e.fieldId}: ${e.verdict} — ${e.message}`)
      expect(wrong).toEqual([])
      expect(Object.keys(all).length).toBe(listFields(def).length)
    })

    it('when the same run is shown to an SI project, then the verdicts do not change', () => {
      const ip = evaluateChecklist(def, { unitSystem: 'IP', designPoint: suite.design, readings: suite.good })
      const si = evaluateChecklist(def, { unitSystem: 'SI', designPoint: suite.design, readings: suite.good })
      for (const id of Object.keys(ip)) expect(si[id].verdict, id).toBe(ip[id].verdict)
    })
  })
}

describe('starter library: messages and missing values', () => {
  const ctx = (readings: Record<string, FieldEntry>, designPoint: DesignPoint | PumpDesignPoint = chillerDesign) => ({ unitSystem: 'IP' as const, designPoint, definition: chiller.definition, readings })

  it('when kW/ton is judged, then the message names the design and its band', () => {
    const readings = { ...GOOD_CHILLER, inputKw: q(310, 'kW') }
    expect(evaluateField(fieldIn(chiller.definition, 'specificPower'), undefined, ctx(readings)).message).toBe(
      'Efficiency 0.618 kW/ton is above the maximum 0.605 kW/ton (design 0.576 kW/ton, +5 %: the AHRI 550/590 tolerance at 100 % load)',
    )
  })
  it('when the pump head is judged in an SI project, then the design 65 ft of water is shown as 194 kPa', () => {
    const r = evaluateField(fieldIn(pump.definition, 'pumpDifferential'), undefined, { unitSystem: 'SI', designPoint: pumpDesign, definition: pump.definition, readings: GOOD_PUMP })
    expect(r.verdict).toBe('pass')
    expect(r.limits?.basis).toBe('design 194 kPa (diff), −10 % to +10 %') // 65 × 2.989067 kPa (NIST SP 811)
  })
  it('when the chiller design point gives no allowed setpoint range, then the two range checks are incomplete, optional, with the problem named', () => {
    const { chilledWaterSetpointMin: _a, chilledWaterSetpointMax: _b, ...without } = chillerDesign
    for (const id of ['chwSetpointAboveMin', 'chwSetpointBelowMax']) {
      const r = evaluateField(fieldIn(chiller.definition, id), undefined, ctx(GOOD_CHILLER, without))
      expect(r.verdict).toBe('incomplete')
      expect(r.required).toBe(false)
      expect(r.problem?.code).toBe('MISSING_DESIGN_VALUE')
    }
  })
  it('when the machine has no oil pressure setpoint in its design point, then the oil pressure checks are incomplete, not guessed', () => {
    const { oilPressureSetpoint: _o, ...without } = chillerDesign
    const r = evaluateField(fieldIn(chiller.definition, 'oilPressureRunning'), GOOD_CHILLER.oilPressureRunning, ctx(GOOD_CHILLER, without))
    expect(r.verdict).toBe('incomplete')
    expect(r.problem?.code).toBe('MISSING_DESIGN_VALUE')
  })
  it('when a pump template field is judged against a chiller design point, then it is incomplete: the pump values are not there', () => {
    const r = evaluateField(fieldIn(pump.definition, 'pumpFlow'), GOOD_PUMP.pumpFlow, { unitSystem: 'IP', designPoint: chillerDesign, definition: pump.definition, readings: GOOD_PUMP })
    expect(r.verdict).toBe('incomplete')
    expect(r.problem?.code).toBe('MISSING_DESIGN_VALUE')
  })
})
