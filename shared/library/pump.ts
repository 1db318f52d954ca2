import type { ChecklistDefinition, FieldRule } from '../schemas/checklist'
import { choice, computed, measured, photo, text, yesNo } from './build'
import { ARC_FLASH, COUPLINGS, DEFER, LOCKOUT } from './cautions'

// Chilled-water or condenser-water pump start-up (flexible-coupled, end-suction or split-case). Flow, head, speed,
// voltage and current are judged against the pump's design point; alignment and vibration limits are common-practice
// defaults for pumps up to 1800 rpm, stated in the help text.

const offset: FieldRule = { type: 'range', min: -4, warnMin: -2, warnMax: 2, max: 4 }
const OFFSET_HELP =
  "At the coupling centre, signed as the tool shows it. Common practice for speeds up to 1800 rpm: within ±4 mils (±0.10 mm), beyond ±2 mils marginal; for 3600 rpm halve both. The coupling and pump makers' tolerances govern."

const angularity: FieldRule = { type: 'range', min: -0.5, warnMin: -0.3, warnMax: 0.3, max: 0.5 }
const ANGULARITY_HELP =
  "Slope between the shafts, signed as the tool shows it. Common practice for speeds up to 1800 rpm: within ±0.5 mils/in (±0.05 mm/100 mm), beyond ±0.3 mils/in marginal; for 3600 rpm use ±0.3 and ±0.2. The coupling and pump makers' tolerances govern."

const vibration: FieldRule = { type: 'range', min: 0, warnMax: 0.1, max: 0.15 }
const VIBRATION_HELP =
  "Overall velocity, RMS, in the worst direction at the bearing housing, at the design operating point. Common practice for a new pump in the field: up to 0.10 in/s (2.5 mm/s) passes, above it is marginal, above 0.15 in/s (3.8 mm/s) fails. The pump maker's limit and the pump vibration standard it cites (for example ANSI/HI 9.6.4) govern."

const phaseVoltage: FieldRule = { type: 'design', key: 'voltage', lowerPct: 10, upperPct: 10, warnLowerPct: 5, warnUpperPct: 5 }
const VOLTAGE_HELP =
  'Line to line at the motor starter or drive output while running. NEMA MG 1 motors are rated for ±10 % of nameplate voltage; beyond ±5 % is marked marginal (common practice).'

const phaseCurrent: FieldRule = { type: 'design', key: 'fullLoadAmps', upperPct: 15, warnUpperPct: 0 }
const CURRENT_HELP =
  "Per phase while running at the design point. Common practice: at or below the nameplate full-load amps passes; running into a 1.15 service factor (up to 15 % above) is marginal; more fails. For a 1.0 service-factor motor set the upper limit to 0 %."

export const pumpStartupDefinition: ChecklistDefinition = {
  title: 'Chilled-water or condenser-water pump start-up',
  unitSystem: 'IP',
  sections: [
    {
      id: 'prestart',
      title: 'Pre-start inspection',
      steps: [
        {
          id: 'pump-safety',
          title: 'Before work starts',
          help: 'These cautions apply to the whole start-up.',
          safety: true,
          stop: 'Do not proceed until the lockout/tagout arrangements are agreed with the site.',
          cautions: [LOCKOUT, ARC_FLASH, COUPLINGS, DEFER],
          fields: [yesNo('pumpSafetyBriefing', 'Lockout/tagout arrangements agreed with the site before any hands-on work')],
        },
        {
          id: 'pump-system',
          title: 'System ready',
          fields: [
            yesNo('systemFilledVented', 'System filled and vented; pump casing full of water', {
              help: 'A mechanical seal must never run dry, not even for a bump test.',
            }),
            yesNo('strainerClean', 'Suction strainer cleaned, start-up screen fitted or removed as specified'),
            yesNo('valvesSet', 'Suction and discharge isolation valves open; balancing valve at its marked position'),
            yesNo('pipingSupported', 'Piping supported on its own: no pipe strain on the pump casing'),
            choice('bearingLubrication', 'Bearing lubrication', [['lubricated', "Lubricated as the manufacturer specifies"], ['sealed', 'Sealed-for-life bearings'], ['not_done', 'Not done']], ['lubricated', 'sealed']),
            yesNo('couplingGuardFitted', 'Coupling guard fitted', { cautions: [COUPLINGS] }),
          ],
        },
      ],
    },
    {
      id: 'alignment',
      title: 'Shaft alignment',
      steps: [
        {
          id: 'alignment-final',
          title: 'Final alignment',
          help: 'Measured with the motor locked out, after the piping is connected and the grout has cured, and before the coupling guard goes back on.',
          cautions: [LOCKOUT, COUPLINGS],
          fields: [
            choice('alignmentMethod', 'Alignment measured with', [['laser', 'Laser alignment tool'], ['dial', 'Dial indicators (reverse or rim-and-face)'], ['straightedge', 'Straightedge and feeler gauge'], ['not_measured', 'Not measured']], ['laser', 'dial'], ['straightedge'], {
              help: 'A straightedge cannot resolve the limits below, so it is marginal (common practice); an unmeasured alignment fails.',
            }),
            measured('offsetVertical', 'Vertical offset', 'alignment_offset', 'mil', offset, { help: OFFSET_HELP }),
            measured('offsetHorizontal', 'Horizontal offset', 'alignment_offset', 'mil', offset, { help: OFFSET_HELP }),
            measured('angularityVertical', 'Vertical angularity', 'alignment_angularity', 'milPerIn', angularity, { help: ANGULARITY_HELP }),
            measured('angularityHorizontal', 'Horizontal angularity', 'alignment_angularity', 'milPerIn', angularity, { help: ANGULARITY_HELP }),
            measured('softFoot', 'Largest soft foot', 'alignment_offset', 'mil', { type: 'range', min: 0, warnMax: 1, max: 2 }, {
              help: 'Rise of the worst motor foot when its hold-down bolt is loosened. Common practice: 2 mils (0.05 mm) at most, above 1 mil marginal; correct with shims before the final alignment.',
            }),
            photo('alignmentReport', 'Alignment report or tool screen', { required: false }),
          ],
        },
      ],
    },
    {
      id: 'rotation',
      title: 'Rotation',
      steps: [
        {
          id: 'rotation-check',
          title: 'Direction of rotation',
          cautions: [LOCKOUT, COUPLINGS],
          fields: [
            yesNo('motorRotationUncoupled', 'Motor bumped with the coupling disconnected and turns the way the pump needs', {
              help: 'Common practice: check rotation uncoupled, so a reversed motor cannot spin the pump backwards (some impellers unscrew).',
            }),
            yesNo('pumpRotationCorrect', 'Pump turns the way the arrow on the casing shows'),
          ],
        },
      ],
    },
    {
      id: 'running',
      title: 'Running checks',
      steps: [
        {
          id: 'hydraulic',
          title: 'Flow and head against the pump curve point',
          help: 'With the system at its design operating condition. Gauges at the same height on the suction and discharge connections.',
          fields: [
            measured('pumpFlow', 'Pump flow', 'volumetric_flow', 'gpm',
              { type: 'design', key: 'pumpDesignFlow', lowerPct: 10, upperPct: 10, warnLowerPct: 5, warnUpperPct: 5 },
              { help: 'From a flow meter or a calibrated balancing valve. Common practice: within ±10 % of the design flow, beyond ±5 % marginal.' }),
            measured('suctionPressure', 'Suction pressure', 'pressure_gauge', 'psig'),
            measured('dischargePressure', 'Discharge pressure', 'pressure_gauge', 'psig'),
            computed('pumpDifferential', 'Pump differential pressure (head)', 'pressure_differential', 'psid', 'dischargePressure - suctionPressure',
              { type: 'design', key: 'pumpDesignHead', lowerPct: 10, upperPct: 10, warnLowerPct: 5, warnUpperPct: 5 },
              { help: 'Discharge minus suction, against the design head converted to the same pressure (1 psi ≈ 2.31 ft of water). The velocity-head difference is neglected and water is taken at its conventional density, as common practice for a field check: within ±10 % of design, beyond ±5 % marginal. Off the design flow, read the expected head from the pump curve at the measured flow before judging the pump.' }),
            measured('shaftSpeed', 'Shaft speed at full speed', 'rotational_speed', 'rpm',
              { type: 'design', key: 'motorRatedSpeed', lowerPct: 3, upperPct: 2, warnLowerPct: 1.5 },
              { required: false, help: 'By tachometer, across the line or with the drive at its full-speed frequency. An induction motor runs a little below synchronous speed: near the nameplate speed at full load, closer to synchronous at light load. Common practice: within −3 %/+2 % of the rated speed, more than 1.5 % below marginal.' }),
          ],
        },
        {
          id: 'pump-electrical',
          title: 'Motor voltage and current',
          cautions: [ARC_FLASH],
          fields: [
            measured('pumpVoltsAB', 'Voltage A–B', 'voltage', 'V', phaseVoltage, { help: VOLTAGE_HELP }),
            measured('pumpVoltsBC', 'Voltage B–C', 'voltage', 'V', phaseVoltage, { help: VOLTAGE_HELP }),
            measured('pumpVoltsCA', 'Voltage C–A', 'voltage', 'V', phaseVoltage, { help: VOLTAGE_HELP }),
            computed('pumpVoltageUnbalance', 'Voltage unbalance', 'percent', '%', 'unbalancePct([pumpVoltsAB, pumpVoltsBC, pumpVoltsCA])', { type: 'range', max: 2, warnMax: 1 }, {
              help: 'Largest deviation from the average of the three, over the average (NEMA MG 1). Above 1 % the motor must be derated (marginal); common practice fails above 2 %.',
            }),
            measured('pumpAmpsA', 'Current phase A', 'current', 'A', phaseCurrent, { help: CURRENT_HELP }),
            measured('pumpAmpsB', 'Current phase B', 'current', 'A', phaseCurrent, { help: CURRENT_HELP }),
            measured('pumpAmpsC', 'Current phase C', 'current', 'A', phaseCurrent, { help: CURRENT_HELP }),
            computed('pumpCurrentUnbalance', 'Current unbalance', 'percent', '%', 'unbalancePct([pumpAmpsA, pumpAmpsB, pumpAmpsC])', { type: 'range', max: 10, warnMax: 5 }, {
              help: 'Same NEMA MG 1 method as voltage. Common practice: within 10 %; above 5 % is marginal.',
            }),
          ],
        },
        {
          id: 'mechanical',
          title: 'Vibration, noise and seal',
          cautions: [COUPLINGS],
          fields: [
            measured('vibMotorOutboard', 'Vibration, motor outboard bearing', 'vibration_velocity', 'inps', vibration, { help: VIBRATION_HELP }),
            measured('vibMotorInboard', 'Vibration, motor inboard bearing', 'vibration_velocity', 'inps', vibration, { help: VIBRATION_HELP }),
            measured('vibPumpInboard', 'Vibration, pump inboard bearing', 'vibration_velocity', 'inps', vibration, { help: VIBRATION_HELP }),
            measured('vibPumpOutboard', 'Vibration, pump outboard bearing', 'vibration_velocity', 'inps', vibration, { help: VIBRATION_HELP }),
            yesNo('noCavitationNoise', 'Runs without cavitation (a gravel-like rattle) or other unusual noise'),
            choice('sealLeakage', 'Mechanical seal leakage', [['none', 'None visible'], ['drops', 'Occasional drops'], ['steady', 'Steady drip or stream']], ['none'], ['drops'], {
              help: 'A new mechanical seal may weep for the first hours of running (common practice): occasional drops are marginal; look again before handover.',
            }),
          ],
        },
      ],
    },
    {
      id: 'pump-handover',
      title: 'Handover',
      steps: [
        {
          id: 'pump-handover-notes',
          title: 'Handover',
          fields: [
            yesNo('strainerRecheckExplained', 'Owner told to clean the suction strainer again after the first weeks of running', {
              help: 'Common practice: construction debris collects in the strainer during the first weeks.',
            }),
            text('pumpNotes', 'Notes and findings', { required: false }),
          ],
        },
      ],
    },
  ],
}
