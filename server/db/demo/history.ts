import type { FieldEntry } from '@shared/schemas/reading'
import type { ChillerKnobs, PumpKnobs } from './readings'

/**
 * Three years of the invented firm's start-ups, oldest first: who did which run on which machine, when (days before
 * the load, so the history always ends in the recent past), and what the day held. Most runs are clean; some are
 * marginal; a few fail, with a finding or a justification, and several machines were re-tested with the same
 * checklist, so the archive shows one report superseded by the next.
 */

export interface FindingPlan {
  stepId: string
  fieldId?: string
  severity: 'minor' | 'major' | 'critical'
  description: string
  /** Put right during the run: new entries for the fields (from the first entries), and how it was resolved. */
  resolve?: { entries: (first: Map<string, FieldEntry>) => Record<string, FieldEntry>; resolution: string }
}

export interface RunPlan {
  id: string
  project: string
  tag: string
  technician: string
  daysAgo: number
  /** Working days between the performer's signature and the owner's representative's acceptance. */
  acceptAfterDays: number
  chiller?: ChillerKnobs
  pump?: PumpKnobs
  /** Entries replacing what the generator produced (an answer that fails, say). */
  set?: Record<string, FieldEntry>
  /** Why a failing reading is acceptable without a finding. */
  justify?: Record<string, string>
  findings?: FindingPlan[]
  /** Step notes. */
  notes?: Record<string, string>
  /** A re-test of this earlier run (same equipment, same checklist): what was checked then and is unchanged is carried over from its report. */
  retestOf?: string
  /** Steps deferred to a later date (seasonal load, a part on order): the reason and how many days after the run it is due. */
  defer?: Record<string, { reason: string; dueInDays: number }>
  /** Steps not done because they could not be done safely that day: the reason. */
  notDone?: Record<string, string>
}

const RAFE = 'rafe.okafor@tallowmere.test'
const INES = 'ines.marlow@tallowmere.test'
const WREN = 'wren.castellane@tallowmere.test'
const BASTIAN = 'bastian.orrick@tallowmere.test'

const withValue = (entry: FieldEntry | undefined, value: number): FieldEntry => ({ ...(entry as { unit: string }), value } as FieldEntry)

export const DEMO_HISTORY: RunPlan[] = [
  // Lisgarde Civic Centre, three winters ago.
  { id: 'lcc-chwp1', project: 'LCC-CP', tag: 'CHWP-1', technician: RAFE, daysAgo: 1080, acceptAfterDays: 1 },
  {
    id: 'lcc-chwp2', project: 'LCC-CP', tag: 'CHWP-2', technician: RAFE, daysAgo: 1080, acceptAfterDays: 1,
    set: { sealLeakage: { value: 'drops' } },
    findings: [{ stepId: 'mechanical', fieldId: 'sealLeakage', severity: 'minor', description: 'Mechanical seal weeping a drop every few seconds at start-up. Owner’s staff to look again after 48 h of running; replace the seal under warranty if it has not bedded in.' }],
  },
  {
    id: 'lcc-ch1', project: 'LCC-CP', tag: 'CH-1', technician: BASTIAN, daysAgo: 1077, acceptAfterDays: 2, chiller: { startSequence: true },
    defer: { 'trip-high-condenser': { reason: 'Winter tower water: the condenser pressure cannot be raised to the cutout without bypassing the tower controls. To be tested at the first warm-weather load.', dueInDays: 150 } },
  },
  { id: 'lcc-cwp2', project: 'LCC-CP', tag: 'CWP-2', technician: BASTIAN, daysAgo: 1073, acceptAfterDays: 1 },
  {
    id: 'lcc-cwp1', project: 'LCC-CP', tag: 'CWP-1', technician: BASTIAN, daysAgo: 1073, acceptAfterDays: 1,
    pump: { vibrationWorst: 0.19, softFoot: 2.6 },
    justify: { softFoot: 'Soft foot under the outboard motor feet is the cause of the vibration recorded on this run; see the finding.' },
    findings: [{ stepId: 'mechanical', fieldId: 'vibPumpInboard', severity: 'major', description: 'Pump inboard bearing vibration 0.19 in/s, above the 0.15 in/s limit, with 2.6 mils of soft foot under the motor. Motor to be re-shimmed and the pump re-aligned, then re-tested.' }],
  },
  {
    id: 'lcc-ch2', project: 'LCC-CP', tag: 'CH-2', technician: BASTIAN, daysAgo: 1070, acceptAfterDays: 2,
    chiller: { condApproach: 5.8, kwFactor: 1.02 },
    findings: [{ stepId: 'condenser', fieldId: 'condApproach', severity: 'major', description: 'Condenser approach 5.8 °F at full load on a new machine: non-condensables suspected. The manufacturer’s service engineer to run the purge and check it; re-test the running checks afterwards.' }],
    notes: { condenser: 'Purge unit counter showed frequent runs during the afternoon.' },
  },
  { id: 'lcc-cwp1-r', project: 'LCC-CP', tag: 'CWP-1', technician: BASTIAN, daysAgo: 1050, acceptAfterDays: 1, retestOf: 'lcc-cwp1', notes: { 'alignment-final': 'Motor re-shimmed (stainless shims under both outboard feet) and re-aligned with the laser tool.' } },
  { id: 'lcc-ch2-r', project: 'LCC-CP', tag: 'CH-2', technician: RAFE, daysAgo: 1045, acceptAfterDays: 1, retestOf: 'lcc-ch2', notes: { condenser: 'Purge run for two days by the manufacturer’s engineer; purge counter now quiet.' } },
  { id: 'lcc-chwp2-r', project: 'LCC-CP', tag: 'CHWP-2', technician: RAFE, daysAgo: 1040, acceptAfterDays: 2, retestOf: 'lcc-chwp2', notes: { mechanical: 'Seal replaced under warranty; dry after four hours of running.' } },

  // Ardenfell University East Plant, the following spring and summer.
  { id: 'ard-chwpe1', project: 'ARD-EP', tag: 'CHWP-E1', technician: INES, daysAgo: 958, acceptAfterDays: 2 },
  { id: 'ard-chwpe2', project: 'ARD-EP', tag: 'CHWP-E2', technician: INES, daysAgo: 958, acceptAfterDays: 2, pump: { alignmentMethod: 'straightedge' }, notes: { 'alignment-final': 'Laser tool away for calibration; straightedge and feelers used this once.' } },
  { id: 'ard-chwpe3', project: 'ARD-EP', tag: 'CHWP-E3', technician: BASTIAN, daysAgo: 957, acceptAfterDays: 1 },
  {
    id: 'ard-cwpe1', project: 'ARD-EP', tag: 'CWP-E1', technician: BASTIAN, daysAgo: 956, acceptAfterDays: 1,
    set: { motorRotationUncoupled: { value: false } },
    findings: [{
      stepId: 'rotation-check', fieldId: 'motorRotationUncoupled', severity: 'major',
      description: 'Motor turned the wrong way when bumped uncoupled.',
      resolve: { entries: () => ({ motorRotationUncoupled: { value: true } }), resolution: 'Two phases swapped at the starter by the electrical contractor; bumped again uncoupled and the rotation is now correct.' },
    }],
  },
  { id: 'ard-cwpe2', project: 'ARD-EP', tag: 'CWP-E2', technician: RAFE, daysAgo: 955, acceptAfterDays: 1 },
  {
    id: 'ard-cwpe3', project: 'ARD-EP', tag: 'CWP-E3', technician: RAFE, daysAgo: 952, acceptAfterDays: 3,
    pump: { flowFactor: 0.925 },
    findings: [{ stepId: 'hydraulic', fieldId: 'pumpFlow', severity: 'minor', description: 'Flow 7.5 % below design with a clean-looking strainer; the tower basin screens were half blocked with construction debris. Site to clear the screens; flow to be checked again by the balancing contractor.' }],
  },
  { id: 'ard-che1', project: 'ARD-EP', tag: 'CH-E1', technician: INES, daysAgo: 950, acceptAfterDays: 2, chiller: { startSequence: true } },
  {
    id: 'ard-che2', project: 'ARD-EP', tag: 'CH-E2', technician: BASTIAN, daysAgo: 945, acceptAfterDays: 2, chiller: { startSequence: true, kwFactor: 1.035 },
    notDone: { 'trip-low-oil': 'The controls technician who can force the low oil pressure test safely was not on site; the cutout setting was checked against the settings sheet only. To be tested at the first service visit.' },
  },
  {
    id: 'ard-che3', project: 'ARD-EP', tag: 'CH-E3', technician: RAFE, daysAgo: 940, acceptAfterDays: 4,
    chiller: { load: 0.93 },
    notes: { 'test-conditions': 'The campus load on the test day held the machine at about 93 % of design with the other two chillers off. Agreed with the owner’s representative: accept now and re-test the running checks at peak load in the summer.' },
  },
  { id: 'ard-che1-r', project: 'ARD-EP', tag: 'CH-E1', technician: INES, daysAgo: 830, acceptAfterDays: 1, retestOf: 'ard-che1', notes: { evaporator: 'Peak-season performance check requested by the owner at the first summer peak.' } },
  { id: 'ard-che3-r', project: 'ARD-EP', tag: 'CH-E3', technician: RAFE, daysAgo: 820, acceptAfterDays: 2, retestOf: 'ard-che3', notes: { evaporator: 'Summer peak: campus load held the machine at design for the readings.' } },

  // Harrowgate Life Tower, the winter after.
  { id: 'hlt-chwp1', project: 'HLT-MP', tag: 'CHWP-1', technician: BASTIAN, daysAgo: 740, acceptAfterDays: 1 },
  { id: 'hlt-chwp2', project: 'HLT-MP', tag: 'CHWP-2', technician: BASTIAN, daysAgo: 739, acceptAfterDays: 1, pump: { softFoot: 1.4 } },
  {
    id: 'hlt-ch1', project: 'HLT-MP', tag: 'CH-1', technician: BASTIAN, daysAgo: 735, acceptAfterDays: 2,
    chiller: { startSequence: true, oilHeaterHours: 18, voltageSpreadPct: 1.4 },
    findings: [{ stepId: 'motor-supply', fieldId: 'voltageUnbalance', severity: 'minor', description: 'Supply voltage unbalance 1.4 % at the starter with the machine at load; the motor must be derated above 1 %. Reported to the building’s electrical engineer to take up with the utility.' }],
    notes: { oil: 'Oil heater had been on since the previous afternoon only; owner asked for the start to go ahead.' },
  },
  { id: 'hlt-cwp1', project: 'HLT-MP', tag: 'CWP-1', technician: INES, daysAgo: 733, acceptAfterDays: 1, pump: { ampsFactor: 1.07 }, notes: { 'pump-electrical': 'Motor running into its 1.15 service factor; impeller trim to be reviewed with the pump supplier.' } },
  {
    id: 'hlt-ch2', project: 'HLT-MP', tag: 'CH-2', technician: INES, daysAgo: 728, acceptAfterDays: 3,
    set: { refrigerantDetectorTested: { value: false } },
    findings: [{ stepId: 'refrigerant', fieldId: 'refrigerantDetectorTested', severity: 'major', description: 'Machinery-room refrigerant detector raised its alarm at the panel, but the strobe and horn at the east door did not operate. Building’s controls contractor to repair and prove the alarm; the machine may run meanwhile with the door sign and daily detector check agreed with the owner.' }],
  },
  { id: 'hlt-cwp2', project: 'HLT-MP', tag: 'CWP-2', technician: WREN, daysAgo: 700, acceptAfterDays: 1 },
  { id: 'hlt-ch2-r', project: 'HLT-MP', tag: 'CH-2', technician: WREN, daysAgo: 690, acceptAfterDays: 1, retestOf: 'hlt-ch2', notes: { refrigerant: 'Strobe and horn at the east door repaired by the controls contractor and proven with test gas.' } },
  { id: 'hlt-cwp1-r', project: 'HLT-MP', tag: 'CWP-1', technician: WREN, daysAgo: 680, acceptAfterDays: 2, retestOf: 'hlt-cwp1', notes: { hydraulic: 'Impeller trimmed by the pump supplier to the selected diameter.' } },
  { id: 'hlt-ch1-r', project: 'HLT-MP', tag: 'CH-1', technician: BASTIAN, daysAgo: 640, acceptAfterDays: 1, retestOf: 'hlt-ch1', notes: { 'motor-supply': 'Utility re-tapped the service transformer; unbalance checked again at load.' } },

  // Mournevale Regional Hospital (SI), the spring and summer after.
  { id: 'mrh-chwp01', project: 'MRH-EC', tag: 'CHWP-01', technician: WREN, daysAgo: 566, acceptAfterDays: 2 },
  { id: 'mrh-chwp02', project: 'MRH-EC', tag: 'CHWP-02', technician: WREN, daysAgo: 566, acceptAfterDays: 2 },
  { id: 'mrh-cwp01', project: 'MRH-EC', tag: 'CWP-01', technician: INES, daysAgo: 563, acceptAfterDays: 1, pump: { vibrationWorst: 0.12 } },
  { id: 'mrh-cwp02', project: 'MRH-EC', tag: 'CWP-02', technician: INES, daysAgo: 563, acceptAfterDays: 1 },
  {
    id: 'mrh-ch01', project: 'MRH-EC', tag: 'CH-01', technician: WREN, daysAgo: 560, acceptAfterDays: 2,
    chiller: { startSequence: true, lowOilTripPct: -6.5 },
    findings: [{
      stepId: 'trip-low-oil', fieldId: 'lowOilTripValue', severity: 'critical',
      description: 'Low oil pressure cutout tripped 6.5 % below its setting (late, the dangerous side).',
      resolve: {
        entries: (first) => {
          const setting = first.get('lowOilSetting') as { value: number; unit: string }
          return { lowOilTripValue: withValue(first.get('lowOilTripValue'), Math.round(setting.value * 1.01)) }
        },
        resolution: 'Pressure switch re-calibrated by the manufacturer’s service engineer on site and the trip tested again: now within 1 % of the setting.',
      },
    }],
  },
  {
    id: 'mrh-ch02', project: 'MRH-EC', tag: 'CH-02', technician: INES, daysAgo: 553, acceptAfterDays: 3,
    chiller: { chwFlowFactor: 0.88 },
    justify: { chwPressureDrop: 'Follows from the low chilled-water flow; see the finding on the flow.' },
    findings: [{ stepId: 'evaporator', fieldId: 'chwFlow', severity: 'major', description: 'Chilled-water flow 12 % below design: the evaporator balancing valve was found at 40 % open against its marked setting. Balancing contractor to reset and record it; re-test the running checks.' }],
  },
  { id: 'mrh-ch02-r', project: 'MRH-EC', tag: 'CH-02', technician: INES, daysAgo: 530, acceptAfterDays: 1, retestOf: 'mrh-ch02', notes: { 'water-flow': 'Balancing valve reset to its marked position and locked by the balancing contractor.' } },
  { id: 'mrh-cwp01-r', project: 'MRH-EC', tag: 'CWP-01', technician: INES, daysAgo: 520, acceptAfterDays: 1, retestOf: 'mrh-cwp01', notes: { mechanical: 'Coupling insert replaced; vibration taken again at the design point.' } },

  // Corran Polytechnic Building 4 (SI), the autumn after.
  { id: 'crp-chwp1', project: 'CRP-B4', tag: 'CHWP-B4-1', technician: WREN, daysAgo: 410, acceptAfterDays: 2 },
  {
    id: 'crp-chwp2', project: 'CRP-B4', tag: 'CHWP-B4-2', technician: WREN, daysAgo: 409, acceptAfterDays: 2,
    pump: { vibrationWorst: 0.21 },
    findings: [{ stepId: 'mechanical', fieldId: 'vibPumpInboard', severity: 'major', description: 'Pump inboard bearing vibration above the limit with a tonal noise at running speed; bearing suspected. Pump supplier to inspect under warranty.' }],
  },
  { id: 'crp-cwp1', project: 'CRP-B4', tag: 'CWP-B4-1', technician: INES, daysAgo: 405, acceptAfterDays: 1 },
  { id: 'crp-cwp2', project: 'CRP-B4', tag: 'CWP-B4-2', technician: INES, daysAgo: 404, acceptAfterDays: 1 },
  { id: 'crp-ch1', project: 'CRP-B4', tag: 'CH-B4-1', technician: INES, daysAgo: 400, acceptAfterDays: 2, chiller: { startSequence: true, starterRampS: 9.4 }, notes: { 'soft-start': 'Ramp longer than the settings sheet; starter supplier to review the ramp profile at the first service.' } },
  { id: 'crp-chwp2-r', project: 'CRP-B4', tag: 'CHWP-B4-2', technician: WREN, daysAgo: 380, acceptAfterDays: 1, retestOf: 'crp-chwp2', notes: { mechanical: 'Pump-end bearings replaced by the supplier under warranty.' } },

  // Vexley General Hospital, this year.
  { id: 'vxh-chwp1', project: 'VXH-CUP', tag: 'CHWP-1', technician: RAFE, daysAgo: 236, acceptAfterDays: 1 },
  { id: 'vxh-cwp1', project: 'VXH-CUP', tag: 'CWP-1', technician: INES, daysAgo: 235, acceptAfterDays: 1 },
  { id: 'vxh-chwp2', project: 'VXH-CUP', tag: 'CHWP-2', technician: RAFE, daysAgo: 234, acceptAfterDays: 1 },
  { id: 'vxh-cwp2', project: 'VXH-CUP', tag: 'CWP-2', technician: INES, daysAgo: 234, acceptAfterDays: 2 },
  {
    id: 'vxh-ch1', project: 'VXH-CUP', tag: 'CH-1', technician: RAFE, daysAgo: 230, acceptAfterDays: 2,
    chiller: { startSequence: true, condApproach: 3.6 },
    findings: [{ stepId: 'condenser', fieldId: 'condApproach', severity: 'minor', description: 'Condenser approach 3.6 °F, above the 3 °F expected of a clean machine. Tubes to be inspected and brushed at the first annual service; re-test afterwards.' }],
  },
  {
    id: 'vxh-ch2', project: 'VXH-CUP', tag: 'CH-2', technician: INES, daysAgo: 225, acceptAfterDays: 3,
    chiller: { load: 0.935 },
    set: { couplingGuard: { value: 'missing' } },
    notes: { 'test-conditions': 'Hospital load in early spring held the machine at about 93 % of design; agreed with the owner’s representative to accept and re-test in the cooling season.' },
    findings: [{
      stepId: 'safeties', fieldId: 'couplingGuard', severity: 'critical',
      description: 'Coupling guard not fitted after the alignment check.',
      resolve: { entries: () => ({ couplingGuard: { value: 'in_place' } }), resolution: 'Guard refitted and fastened by the mechanical contractor before the first start; checked.' },
    }],
  },
  {
    id: 'vxh-ch2-r', project: 'VXH-CUP', tag: 'CH-2', technician: INES, daysAgo: 150, acceptAfterDays: 1, retestOf: 'vxh-ch2',
    chiller: { evapApproach: 3.4 },
    findings: [{ stepId: 'evaporator', fieldId: 'evapApproach', severity: 'minor', description: 'Evaporator approach 3.4 °F at full load: charge may be slightly low. Manufacturer to check the charge; re-test afterwards.' }],
  },
  { id: 'vxh-ch1-r', project: 'VXH-CUP', tag: 'CH-1', technician: RAFE, daysAgo: 120, acceptAfterDays: 2, retestOf: 'vxh-ch1', notes: { condenser: 'Condenser tubes inspected and brushed; approach checked again at load.' } },
  { id: 'vxh-ch2-r2', project: 'VXH-CUP', tag: 'CH-2', technician: INES, daysAgo: 60, acceptAfterDays: 1, retestOf: 'vxh-ch2-r', notes: { evaporator: 'Refrigerant topped up to the nameplate charge by the manufacturer; entered in the refrigerant log.' } },
]

/** The operators the owner sent to each training session (invented). */
export const DEMO_ATTENDEES: Record<string, string> = {
  'LCC-CP': 'Ruel Dastmoor (chief engineer), Kessa Vintry and Amos Pirrell (operators)',
  'ARD-EP': 'Noor Eskdale (plant manager), Lorcan Hithe, Pia Sandrow and Ezra Mallin (operators)',
  'HLT-MP': 'Gaia Trevanne (building engineer), Cato Wendle (day operator)',
  'MRH-EC': 'Yusra Cawdell (energy centre lead), Tobiah Fenn and Marit Olsgard (stationary engineers)',
  'CRP-B4': 'Dov Arkwright (plant operations), Sela Merrow (operator)',
  'VXH-CUP': 'Joaquin Threlkeld (plant supervisor), Annika Rowbeck and Desmond Ilsley (operators)',
}
