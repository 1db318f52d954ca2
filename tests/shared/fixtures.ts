import type { ChecklistDefinition, ChecklistField } from '../../shared/schemas/checklist'
import type { DesignPoint } from '../../shared/schemas/design-point'

// An invented 500-ton machine at the AHRI 550/590 I-P standard rating conditions (REFERENCES.md §1): 54 → 44 °F
// at 2.4 gpm/ton, condenser 85 → 94.3 °F at 3.0 gpm/ton.
export const designPoint: DesignPoint = {
  refrigerant: 'R-134a',
  capacity: { value: 500, unit: 'TR' },
  evaporatorEnteringWaterTemp: { value: 54, unit: 'degF' },
  evaporatorLeavingWaterTemp: { value: 44, unit: 'degF' },
  evaporatorWaterFlow: { value: 1200, unit: 'gpm' },
  condenserEnteringWaterTemp: { value: 85, unit: 'degF' },
  condenserLeavingWaterTemp: { value: 94.3, unit: 'degF' },
  condenserWaterFlow: { value: 1500, unit: 'gpm' },
  designKwPerTon: { value: 0.576, unit: 'kWPerTon' },
  voltage: { value: 460, unit: 'V' },
  fullLoadAmps: { value: 420, unit: 'A' },
  oilPressureSetpoint: { value: 35, unit: 'psid' },
}

const n = (id: string, label: string, quantity: ChecklistField['quantity'], unit: string, extra: Partial<ChecklistField> = {}): ChecklistField => ({
  id, label, kind: 'number', quantity, unit, required: true, ...extra,
})

export const definition: ChecklistDefinition = {
  title: 'Centrifugal chiller start-up',
  unitSystem: 'IP',
  sections: [
    {
      id: 'water',
      title: 'Water side',
      steps: [
        {
          id: 'evaporator',
          title: 'Evaporator',
          fields: [
            n('chwFlow', 'Evaporator water flow', 'volumetric_flow', 'gpm', { rule: { type: 'design', key: 'evaporatorWaterFlow', lowerPct: 10, upperPct: 10, warnLowerPct: 5, warnUpperPct: 5 } }),
            n('chwEntering', 'Entering chilled water', 'temperature', 'degF'),
            n('chwLeaving', 'Leaving chilled water', 'temperature', 'degF', { rule: { type: 'design_offset', key: 'evaporatorLeavingWaterTemp', lower: 1, upper: 1 } }),
            n('suction', 'Evaporator pressure', 'pressure_gauge', 'psig'),
            n('capacity', 'Capacity', 'cooling_capacity', 'TR', { computed: { expression: 'capacityTons(chwFlow, chwEntering, chwLeaving)' }, rule: { type: 'design', key: 'capacity', lowerPct: 5 } }),
            n('evapApproach', 'Evaporator approach', 'temperature_difference', 'deltaF', { computed: { expression: 'evaporatorApproachF(chwLeaving, saturationTempF(design.refrigerant, suction))' }, rule: { type: 'range', max: 3, warnMax: 2.5 } }),
          ],
        },
      ],
    },
    {
      id: 'electrical',
      title: 'Electrical',
      steps: [
        {
          id: 'supply',
          title: 'Supply',
          fields: [
            n('voltsAB', 'Voltage A–B', 'voltage', 'V'),
            n('voltsBC', 'Voltage B–C', 'voltage', 'V'),
            n('voltsCA', 'Voltage C–A', 'voltage', 'V'),
            n('voltageUnbalance', 'Voltage unbalance', 'percent', '%', { computed: { expression: 'unbalancePct([voltsAB, voltsBC, voltsCA])' }, rule: { type: 'range', max: 2, warnMax: 1 } }),
            n('inputKw', 'Input power', 'power', 'kW'),
            n('specificPower', 'Specific power', 'specific_power', 'kWPerTon', { computed: { expression: 'kwPerTon(inputKw, capacity)' }, rule: { type: 'design', key: 'designKwPerTon', upperPct: 5 } }),
          ],
        },
      ],
    },
    {
      id: 'start',
      title: 'Start sequence',
      steps: [
        {
          id: 'lubrication',
          title: 'Pre-lubrication and oil pressure',
          cautions: ['Never bypass the oil pressure safety.'],
          fields: [
            { id: 'oilRamp', label: 'Oil pressure', kind: 'time_series', quantity: 'pressure_differential', unit: 'psid', required: true, rule: { type: 'ramp', setpoint: 35, reachWithinS: 30, holdS: 20, floor: 25, warnFloor: 30 } },
            { id: 'oilPressure', label: 'Oil pressure', kind: 'number', quantity: 'pressure_differential', unit: 'psid', required: true, rule: { type: 'range', min: 25, warnMin: 30, max: 60 } },
            { id: 'softStart', label: 'Start to full speed', kind: 'timer', quantity: 'time', unit: 's', required: true, rule: { type: 'range', min: 3, max: 8 } },
            { id: 'rotation', label: 'Rotation correct', kind: 'yes_no', required: true, rule: { type: 'yes_no', expected: true } },
            {
              id: 'starterType', label: 'Starter type', kind: 'choice', required: true,
              choices: [{ value: 'solid_state', label: 'Solid-state' }, { value: 'wye_delta', label: 'Wye-delta' }, { value: 'across_line', label: 'Across-the-line' }],
              rule: { type: 'choice', pass: ['solid_state'], marginal: ['wye_delta'] },
            },
            { id: 'remarks', label: 'Remarks', kind: 'text', required: false },
            { id: 'nameplatePhoto', label: 'Nameplate photo', kind: 'photo', required: true },
          ],
        },
      ],
    },
  ],
}

export function field(id: string): ChecklistField {
  for (const s of definition.sections) for (const st of s.steps) for (const f of st.fields) if (f.id === id) return f
  throw new Error(`no field ${id}`)
}
