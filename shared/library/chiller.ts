import type { ChecklistDefinition, FieldRule } from '../schemas/checklist'
import { choice, computed, measured, photo, series, text, timer, yesNo } from './build'
import { ARC_FLASH, COUPLINGS, DEFER, LOCKOUT, NEVER_BYPASS, PRESSURE_VESSEL, REFRIGERANT, SAFETY_TEST } from './cautions'

// Water-cooled centrifugal chiller start-up. Limits that depend on the machine come from its design point
// (design / design_offset rules and design.* in expressions); the others are common-practice defaults, and the
// field's help says so. Facts of the trade behind the defaults: pre-lubrication and a proving hold of about 20 s,
// 25–40 psid oil pressure, a soft-start ramp of a few seconds, 38–55 °F plain-water setpoints, approaches of
// 0.5–3 °F on a clean machine, the standby and yearly maintenance tasks.

const phaseVoltage: FieldRule = { type: 'design', key: 'voltage', lowerPct: 10, upperPct: 10, warnLowerPct: 5, warnUpperPct: 5 }
const VOLTAGE_HELP =
  'Line to line at the starter while running at load. NEMA MG 1 motors are rated for ±10 % of nameplate voltage; beyond ±5 % is marked marginal (common practice).'

const phaseCurrent: FieldRule = { type: 'design', key: 'fullLoadAmps', upperPct: 5, warnUpperPct: 0 }
const CURRENT_HELP =
  "Per phase at the starter, at or near full load. Common practice: up to the design point's full-load amps passes, up to 5 % above is marginal, more fails; at part load the readings are lower."

const tripTime: FieldRule = { type: 'range', min: 0, max: 15, warnMax: 6 }
const TRIP_TIME_HELP =
  "Seconds from the loss of flow (pump stopped as the manufacturer describes) to the machine stopping. Common practice: a few seconds; marginal above 6 s, fail above 15 s. Set the limits to the controller's programmed flow-loss delay."

export const chillerStartupDefinition: ChecklistDefinition = {
  title: 'Water-cooled centrifugal chiller start-up',
  unitSystem: 'IP',
  sections: [
    {
      id: 'prestart',
      title: 'Pre-start inspection',
      steps: [
        {
          id: 'prestart-safety',
          title: 'Before work starts',
          help: 'These cautions apply to the whole start-up. Read them with everyone taking part before any other step.',
          safety: true,
          stop: "Do not proceed until the permits, the lockout/tagout arrangements and the arc-flash boundary are agreed with the site and the manufacturer's start-up instructions for this machine are on hand and read.",
          cautions: [LOCKOUT, ARC_FLASH, REFRIGERANT, NEVER_BYPASS, COUPLINGS, DEFER],
          fields: [
            yesNo('safetyBriefing', 'Permits, lockout/tagout arrangements and the arc-flash boundary agreed with the site'),
            yesNo('manufacturerInstructions', "The manufacturer's start-up instructions for this machine are on hand and have been read"),
          ],
        },
        {
          id: 'power',
          title: 'Power and phase rotation',
          cautions: [LOCKOUT, ARC_FLASH],
          fields: [
            yesNo('supplyMatchesNameplate', 'Incoming supply matches the nameplate voltage and frequency'),
            yesNo('phaseRotation', 'Phase rotation at the starter line terminals checked with a phase-rotation meter and correct', {
              help: 'Check before the first start: a centrifugal compressor turned backwards can be damaged in seconds. The rotation the manufacturer requires governs.',
            }),
            yesNo('terminationsChecked', 'Power terminations in the starter checked for tightness; covers refitted'),
            yesNo('controlPowerHealthy', 'Control power on and the controller shows no active alarm'),
          ],
        },
        {
          id: 'water-flow',
          title: 'Water flow proven in both barrels',
          help: 'Both pumps run and both flows are proven at the controller before the machine is allowed to start.',
          fields: [
            yesNo('chwPumpRunning', 'Chilled-water pump running'),
            yesNo('chwFlowProven', 'Evaporator flow proven at the controller (flow switch or differential-pressure input made)'),
            yesNo('cwPumpRunning', 'Condenser-water pump running'),
            yesNo('cwFlowProven', 'Condenser flow proven at the controller'),
            yesNo('waterBoxesVented', 'Air vented from the evaporator and condenser water boxes'),
            measured('chwPressureDrop', 'Evaporator water pressure drop', 'pressure_differential', 'ftH2O',
              { type: 'design', key: 'evaporatorPressureDrop', lowerPct: 20, upperPct: 20, warnLowerPct: 10, warnUpperPct: 10 },
              { required: false, help: 'Across the evaporator nozzles, against the design drop. Pressure drop goes with the square of flow, so ±10 % flow is about −19 %/+21 % drop. Common practice: within ±20 % of design, beyond ±10 % marginal.' }),
            measured('cwPressureDrop', 'Condenser water pressure drop', 'pressure_differential', 'ftH2O',
              { type: 'design', key: 'condenserPressureDrop', lowerPct: 20, upperPct: 20, warnLowerPct: 10, warnUpperPct: 10 },
              { required: false, help: 'Across the condenser nozzles, against the design drop. Common practice: within ±20 % of design, beyond ±10 % marginal.' }),
          ],
        },
        {
          id: 'oil',
          title: 'Oil system',
          fields: [
            yesNo('oilLevelOk', 'Oil level visible in the sight glass, between the marks'),
            yesNo('oilHeaterOn', 'Oil heater energised'),
            measured('oilHeaterHours', 'Time the oil heater has been on before the first start', 'time', 'h', { type: 'range', min: 12, warnMin: 24 }, {
              help: "The heater drives refrigerant out of the oil before the first start. Common practice: at least 12 h, and many machines ask for 24 h (less than 24 h is marginal); the manufacturer's figure governs.",
            }),
          ],
        },
        {
          id: 'refrigerant',
          title: 'Refrigerant charge',
          cautions: [REFRIGERANT],
          fields: [
            yesNo('refrigerantMatchesNameplate', 'The refrigerant in the machine is the one on the nameplate'),
            yesNo('chargeRecorded', 'Charge as on the nameplate, entered in the refrigerant log'),
            yesNo('leakCheckClean', 'Leak check done and no leak found'),
            yesNo('refrigerantDetectorTested', 'Machinery-room refrigerant detector and alarm tested (ASHRAE Standard 15)'),
          ],
        },
        {
          id: 'starter',
          title: 'Starter',
          cautions: [LOCKOUT, ARC_FLASH],
          fields: [
            choice('starterCoolantLevel', 'Starter coolant level', [['at_mark', 'At the level mark'], ['low', 'Low'], ['air_cooled', 'Not applicable: air-cooled starter']], ['at_mark', 'air_cooled'], [], {
              help: 'A liquid-cooled starter commonly runs its coolant at about 115–120 °F (common practice).',
            }),
            choice('starterCoolingSource', 'Starter coolant is cooled by', [['condenser_water', 'Condenser water'], ['chilled_water', 'Chilled water'], ['air_cooled', 'Not applicable: air-cooled starter']], ['condenser_water', 'air_cooled'], [], {
              help: 'Condenser water keeps the starter above the dew point; chilled water would let it sweat inside (common practice).',
            }),
            yesNo('starterSettingsChecked', "Starter settings (ramp time, current limit, overloads) match the manufacturer's settings sheet"),
          ],
        },
        {
          id: 'safeties',
          title: 'Safeties armed',
          cautions: [NEVER_BYPASS],
          fields: [
            yesNo('safetiesInCircuit', 'Every safety control is in circuit: no jumper, bypass or forced input'),
            yesNo('safetySetpointsChecked', "Safety and control setpoints checked against the manufacturer's settings sheet"),
            choice('couplingGuard', 'Coupling guard', [['in_place', 'In place'], ['hermetic', 'Not applicable: hermetic motor'], ['missing', 'Missing or open']], ['in_place', 'hermetic'], [], {
              cautions: [COUPLINGS],
            }),
          ],
        },
      ],
    },
    {
      id: 'first-start',
      title: 'First start',
      steps: [
        {
          id: 'prelube',
          title: 'Pre-lubrication and oil-pressure proving',
          help: 'Capture the oil pressure from the oil pump start command and mark when the drive started: the pre-lubrication time is read from that mark (use the stopwatch only when there is no capture). The drive may start only after oil pressure is proven and the proving hold has run.',
          cautions: [NEVER_BYPASS, COUPLINGS],
          fields: [
            series('oilPressureRamp', 'Oil pressure from the oil pump start', 'pressure_differential', 'psid',
              { type: 'ramp', setpointKey: 'oilPressureSetpoint', reachWithinS: 30, holdS: 20, floorBelowPct: 30, warnFloorBelowPct: 15 },
              { help: "Differential oil pressure against seconds from the oil pump start, with the moment the drive started marked. The setpoint is this machine's oil pressure setpoint, entered on its design point from the manufacturer's manual. Common practice: reach it within 30 s, hold at or above it for at least 20 s before the drive starts, and never fall more than 30 % below it afterwards (more than 15 % below is marginal); the manufacturer's figures govern." }),
            measured('oilPressureAtDriveStart', 'Oil pressure when the drive started', 'pressure_differential', 'psid', { type: 'design', key: 'oilPressureSetpoint', lowerPct: 0 }, {
              help: "At or above the oil pressure setpoint on the machine's design point: the drive must not start before oil pressure is proven.",
            }),
            {
              ...timer('prelubeTime', 'Pre-lubrication time: oil pump start to drive start', { type: 'range', min: 20, warnMax: 60, max: 120 }, {
                help: 'Common practice: the oil pump runs first and the drive starts after pressure is proven and a hold of about 20 s. At least 20 s; above 60 s is marginal and above 120 s fails — a long wait points at a slow pressure rise. When the oil-pressure capture marks the drive start, that time is used; the stopwatch is for a start without a capture.',
              }),
              fromDriveStart: 'oilPressureRamp',
            },
          ],
        },
        {
          id: 'soft-start',
          title: 'Starter ramp',
          cautions: [COUPLINGS],
          fields: [
            timer('starterRampTime', 'Start command to full speed', { type: 'range', min: 2, warnMin: 3, warnMax: 8, max: 12 }, {
              help: "A solid-state starter brings the motor to full speed in a few seconds (3.5–5 s is often quoted; large machines take longer). Common practice defaults: 3–8 s passes, 2–3 s or 8–12 s is marginal, outside 2–12 s fails. Set the window around the starter's programmed ramp.",
            }),
            yesNo('startWithoutTrouble', 'Start free of unusual noise, vibration or trips'),
          ],
        },
      ],
    },
    {
      id: 'running',
      title: 'Running checks',
      steps: [
        {
          id: 'test-conditions',
          title: 'Test conditions',
          help: 'Record these with the running readings: they say how far capacity and efficiency can be judged. A machine following a building load below design cannot show its design capacity; condenser water colder than design lowers kW/ton.',
          fields: [
            choice('capacityControl', 'Capacity control during the readings', [
              ['full', 'At full capacity: guide vanes fully open, drive at maximum speed, or held at the current limit'],
              ['following', 'Unloaded, following the building load'],
              ['limited', 'Held below full capacity by a demand limit or a setpoint'],
            ], [], [], { help: 'From the control panel. Capacity is judged against design only at full capacity; otherwise it is recorded with the load.' }),
            choice('condenserControl', 'Condenser-water control during the readings', [
              ['design', 'Tower controlling to the design entering temperature'],
              ['colder', 'Tower delivering colder water than design (fans cycling, mild weather)'],
              ['warmer', 'Tower fans at full speed, water warmer than design'],
              ['bypass', 'Tower bypass valve modulating'],
            ], [], [], { help: 'The condenser water follows the tower and the weather: its temperatures are recorded with their deviation from design, not judged as chiller faults.' }),
            measured('loadAmpsPct', 'Motor current, % of rated load amps', 'percent', '%', undefined, {
              required: false,
              help: "As the control panel shows it, or the average phase current over the motor's rated load amps.",
            }),
            {
              ...measured('barometricPressure', "Site barometric pressure today (if not the project's setting)", 'pressure_absolute', 'inHgAbs', undefined, {
              required: false,
              help: "Leave blank to use the project's site setting (from its elevation). Enter the station pressure at the site, not a sea-level weather figure; gauge and vacuum readings of this run are converted to absolute with it. Accepted 60–110 kPa (17.7–32.5 inHg).",
            }),
              siteBarometric: true,
            },
            computed('testLoad', 'Load during the readings, % of design capacity', 'percent', '%', '100 * capacity / design.capacity', undefined, {
              help: 'Measured capacity over the design capacity. The AHRI 550/590 tolerance on capacity and efficiency is taken at this load (docs/REFERENCES.md, test conditions).',
            }),
          ],
        },
        {
          id: 'motor-supply',
          title: 'Motor supply',
          help: 'Take the running readings after the machine has run steadily at or near full load for at least 15 minutes (common practice).',
          cautions: [ARC_FLASH],
          fields: [
            measured('voltsAB', 'Voltage A–B', 'voltage', 'V', phaseVoltage, { help: VOLTAGE_HELP }),
            measured('voltsBC', 'Voltage B–C', 'voltage', 'V', phaseVoltage, { help: VOLTAGE_HELP }),
            measured('voltsCA', 'Voltage C–A', 'voltage', 'V', phaseVoltage, { help: VOLTAGE_HELP }),
            computed('voltageUnbalance', 'Voltage unbalance', 'percent', '%', 'unbalancePct([voltsAB, voltsBC, voltsCA])', { type: 'range', max: 2, warnMax: 1 }, {
              help: 'Largest deviation from the average of the three, over the average (NEMA MG 1). Above 1 % the motor must be derated (marginal); common practice fails above 2 %. Supply systems should stay under 3 % (ANSI C84.1).',
            }),
            measured('ampsA', 'Current phase A', 'current', 'A', phaseCurrent, { help: CURRENT_HELP }),
            measured('ampsB', 'Current phase B', 'current', 'A', phaseCurrent, { help: CURRENT_HELP }),
            measured('ampsC', 'Current phase C', 'current', 'A', phaseCurrent, { help: CURRENT_HELP }),
            computed('currentUnbalance', 'Current unbalance', 'percent', '%', 'unbalancePct([ampsA, ampsB, ampsC])', { type: 'range', max: 10, warnMax: 5 }, {
              help: 'Same NEMA MG 1 method as voltage. Common practice: within 10 % at full load; above 5 % is marginal.',
            }),
            measured('inputKw', 'Input power', 'power', 'kW', undefined, { help: "From the starter's or drive's meter, or a power analyser, at the same moment as the water readings." }),
          ],
        },
        {
          id: 'oil-running',
          title: 'Oil system while running',
          fields: [
            measured('oilPressureRunning', 'Oil pressure (differential)', 'pressure_differential', 'psid',
              { type: 'design', key: 'oilPressureSetpoint', lowerPct: 15, upperPct: 50, warnLowerPct: 0, warnUpperPct: 30 },
              { help: "Against the oil pressure setpoint on the machine's design point. Common practice: at or above the setpoint passes; up to 15 % below is marginal and further below fails; more than 30 % above is marginal and more than 50 % above fails (a regulator or gauge fault)." }),
            measured('oilTempRunning', 'Oil temperature (sump)', 'temperature', 'degF', { type: 'range', min: 100, warnMin: 110, warnMax: 150, max: 165 }, {
              help: "Common practice defaults: 110–150 °F passes, 100–110 °F or 150–165 °F is marginal, outside 100–165 °F fails. The range is model-specific: set it to the manufacturer's.",
            }),
          ],
        },
        {
          id: 'evaporator',
          title: 'Evaporator',
          fields: [
            measured('chwEntering', 'Entering chilled-water temperature', 'temperature', 'degF',
              { type: 'design_reference', key: 'evaporatorEnteringWaterTemp' },
              { help: 'Set by the building load, not by the chiller: recorded with its deviation from the design point, not judged.' }),
            measured('chwLeaving', 'Leaving chilled-water temperature', 'temperature', 'degF',
              { type: 'design_offset', key: 'evaporatorLeavingWaterTemp', lower: 1, upper: 1, warnLower: 0.5, warnUpper: 0.5 },
              { help: 'Against design. Common practice: within ±1 °F, beyond ±0.5 °F marginal.' }),
            measured('chwFlow', 'Chilled-water flow', 'volumetric_flow', 'gpm',
              { type: 'design', key: 'evaporatorWaterFlow', lowerPct: 10, upperPct: 10, warnLowerPct: 5, warnUpperPct: 5 },
              { help: 'From a flow meter or the calibrated pressure drop. Common practice: within ±10 % of design, beyond ±5 % marginal.' }),
            measured('evapPressure', 'Evaporator refrigerant pressure', 'pressure_gauge', 'psig', undefined, {
              help: 'In psig, or in inches of mercury vacuum on a machine whose evaporator runs below atmospheric.',
            }),
            computed('evapSatTemp', 'Saturated evaporator temperature', 'temperature', 'degF', 'saturationTempF(design.refrigerant, evapPressure)', { type: 'range', min: 33, warnMin: 35 }, {
              help: "From the evaporator pressure and the machine's refrigerant. Common practice with plain water: above 33 °F, marginal below 35 °F; colder needs freeze protection and the manufacturer's approval.",
            }),
            computed('evapApproach', 'Evaporator approach', 'temperature_difference', 'deltaF', 'evaporatorApproachF(chwLeaving, evapSatTemp)', { type: 'range', min: 0, warnMax: 3, max: 5 }, {
              help: 'Leaving chilled water minus saturated evaporator temperature. Common practice for a new, clean machine at full load: about 0.5–3 °F; above 3 °F is marginal, above 5 °F fails (fouling or low charge); below zero means a reading is wrong.',
            }),
            computed('capacity', 'Cooling capacity', 'cooling_capacity', 'TR', 'waterHeatTons(chwFlow, chwEntering, chwLeaving)',
              { type: 'rated_at_load', key: 'capacity', side: 'below', loadField: 'testLoad', onlyWhen: { field: 'capacityControl', values: ['full'] } },
              { help: 'Flow × density × specific heat × (entering − leaving), with the properties of water at the mean water temperature (IAPWS-IF97). Judged only when the machine was at full capacity: not more than the AHRI 550/590 tolerance at the measured load short of design (5 % at full load with a 10 °F range; wider at part load); more than half of it short is marginal (common practice). Field instruments are not a rating test: a shortfall is a reason to look. Confirm the tolerance against the edition your contract names.' }),
          ],
        },
        {
          id: 'condenser',
          title: 'Condenser',
          fields: [
            measured('cwEntering', 'Entering condenser-water temperature', 'temperature', 'degF',
              { type: 'design_reference', key: 'condenserEnteringWaterTemp' },
              { help: "Set by the tower and the weather, not by the chiller: recorded with its deviation from the design point. Colder than design helps down to the machine's minimum entering temperature (manufacturer's figure); warmer costs capacity and kW/ton." }),
            measured('cwLeaving', 'Leaving condenser-water temperature', 'temperature', 'degF',
              { type: 'design_reference', key: 'condenserLeavingWaterTemp' },
              { help: 'Entering condenser water plus the rise the load and the flow make: recorded with its deviation from the design point, not judged.' }),
            measured('cwFlow', 'Condenser-water flow', 'volumetric_flow', 'gpm',
              { type: 'design', key: 'condenserWaterFlow', lowerPct: 10, upperPct: 10, warnLowerPct: 5, warnUpperPct: 5 },
              { help: 'Common practice: within ±10 % of design, beyond ±5 % marginal.' }),
            measured('condPressure', 'Condenser refrigerant pressure', 'pressure_gauge', 'psig'),
            computed('condSatTemp', 'Saturated condensing temperature', 'temperature', 'degF', 'saturationTempF(design.refrigerant, condPressure)', undefined, {
              help: "From the condenser pressure and the machine's refrigerant.",
            }),
            computed('condApproach', 'Condenser approach', 'temperature_difference', 'deltaF', 'condenserApproachF(cwLeaving, condSatTemp)', { type: 'range', min: 0, warnMax: 3, max: 5 }, {
              help: 'Saturated condensing temperature minus leaving condenser water. Common practice for a new, clean machine at full load: about 0.5–3 °F; above 3 °F is marginal, above 5 °F fails (fouling or non-condensables); below zero means a reading is wrong.',
            }),
            computed('condenserHeat', 'Heat rejected in the condenser', 'cooling_capacity', 'TR', 'waterHeatTons(cwFlow, cwLeaving, cwEntering)', undefined, {
              help: 'Flow × density × specific heat × (leaving − entering), with the properties of water at the mean water temperature (IAPWS-IF97); used by the heat balance.',
            }),
          ],
        },
        {
          id: 'performance',
          title: 'Efficiency and heat balance',
          fields: [
            computed('specificPower', 'Efficiency', 'specific_power', 'kWPerTon', 'kwPerTon(inputKw, capacity)',
              { type: 'rated_at_load', key: 'designKwPerTon', side: 'above', loadField: 'testLoad', minLoadPct: 75 },
              { help: 'Input kW over capacity in tons (kW/ton); SI projects read it as COP, cooling kW over input kW. Not more than the AHRI 550/590 tolerance at the measured load above the design kW/ton (in COP: not below the design COP divided by one plus the tolerance); more than half of it is marginal (common practice). Below 75 % load it is recorded, not judged: compare it with the manufacturer’s part-load rating. Confirm the tolerance against the edition your contract names.' }),
            computed('heatBalance', 'Heat balance', 'percent', '%', 'heatBalancePct(tonsToKw(capacity), tonsToKw(condenserHeat), inputKw)',
              { type: 'range', min: -5, max: 5, warnMin: -3, warnMax: 3 },
              { help: '((evaporator heat + input power) − condenser heat) / condenser heat. Within ±5 % (a practitioner’s default modelled on AHRI 550/590; confirm it against the edition your contract names); beyond ±3 % is marginal (common practice). A larger imbalance means a flow or temperature reading is wrong: check them before believing capacity or kW/ton.' }),
          ],
        },
        {
          id: 'setpoint',
          title: 'Leaving chilled-water setpoint',
          fields: [
            measured('chwSetpoint', 'Leaving chilled-water setpoint', 'temperature', 'degF', { type: 'range', min: 38, warnMin: 40, max: 55 }, {
              help: 'Common practice for plain water: 38–55 °F, with 38–40 °F marginal; a lower setpoint needs freeze protection.',
            }),
            computed('chwSetpointAboveMin', "Setpoint above the machine's lowest allowed setpoint", 'temperature_difference', 'deltaF', 'chwSetpoint - design.chilledWaterSetpointMin', { type: 'range', min: 0 }, {
              required: false,
              help: "Against the lowest allowed setpoint on the machine's design point; must not be negative. Skipped (left incomplete) when the design point does not give it.",
            }),
            computed('chwSetpointBelowMax', "Setpoint below the machine's highest allowed setpoint", 'temperature_difference', 'deltaF', 'design.chilledWaterSetpointMax - chwSetpoint', { type: 'range', min: 0 }, {
              required: false,
              help: "Against the highest allowed setpoint on the machine's design point; must not be negative. Skipped (left incomplete) when the design point does not give it.",
            }),
          ],
        },
      ],
    },
    {
      id: 'safety-tests',
      title: 'Safety control functional tests',
      steps: [
        {
          id: 'trip-flow',
          title: 'Loss of water flow',
          cautions: [SAFETY_TEST, NEVER_BYPASS],
          fields: [
            yesNo('chwFlowLossTrip', 'Machine stopped on loss of chilled-water flow'),
            timer('chwFlowLossTime', 'Loss of chilled-water flow to machine stop', tripTime, { help: TRIP_TIME_HELP }),
            yesNo('cwFlowLossTrip', 'Machine stopped on loss of condenser-water flow'),
            timer('cwFlowLossTime', 'Loss of condenser-water flow to machine stop', tripTime, { help: TRIP_TIME_HELP }),
            yesNo('restartBlockedWithoutFlow', 'Machine would not restart until flow was proven again'),
          ],
        },
        {
          id: 'trip-low-evaporator',
          title: 'Low evaporator temperature',
          help: "Usually tested by moving the cutout toward the running value as the manufacturer describes. Record the setting tested and the saturated evaporator temperature at the trip; put the setting back afterwards.",
          cautions: [SAFETY_TEST],
          fields: [
            yesNo('lowEvapTrip', 'Machine stopped at the low evaporator temperature cutout'),
            measured('lowEvapSetting', 'Cutout setting in service', 'temperature', 'degF', { type: 'range', min: 32 }, {
              help: "The setting left in service. Common practice with plain water: not below 32 °F; the manufacturer's setting governs.",
            }),
            measured('lowEvapTestSetting', 'Setting at which the trip was tested', 'temperature', 'degF'),
            measured('lowEvapTripValue', 'Saturated evaporator temperature at the trip', 'temperature', 'degF'),
            computed('lowEvapTripError', 'Low evaporator trip: trip value minus test setting', 'temperature_difference', 'deltaF', 'lowEvapTripValue - lowEvapTestSetting',
              { type: 'range', min: -1, warnMin: -0.5, max: 2, warnMax: 1 },
              { help: 'Common practice: a safety trips close to its setting. Tripping late (colder than the setting) is the dangerous side: fail beyond 1 °F late, marginal beyond 0.5 °F; fail beyond 2 °F early, marginal beyond 1 °F. Check the sensor when it is off.' }),
          ],
        },
        {
          id: 'trip-high-condenser',
          title: 'High condenser pressure',
          cautions: [SAFETY_TEST, PRESSURE_VESSEL],
          fields: [
            yesNo('highCondTrip', 'Machine stopped at the high condenser pressure cutout'),
            measured('highCondSetting', 'Cutout setting', 'pressure_gauge', 'psig'),
            measured('highCondTripValue', 'Condenser pressure at the trip', 'pressure_gauge', 'psig'),
            computed('highCondTripError', 'High condenser trip: deviation from the setting', 'percent', '%', 'designDeviationPct(highCondTripValue, highCondSetting)',
              { type: 'range', min: -5, warnMin: -3, max: 3, warnMax: 1.5 },
              { help: 'Percent above (+) or below (−) the setting. Tripping late (above the setting) is the dangerous side. Common practice: fail beyond 3 % late, marginal beyond 1.5 %; fail beyond 5 % early, marginal beyond 3 %.' }),
          ],
        },
        {
          id: 'trip-low-oil',
          title: 'Low oil pressure',
          cautions: [SAFETY_TEST, COUPLINGS],
          fields: [
            yesNo('lowOilTrip', 'Machine stopped, or refused to start, at the low oil pressure cutout'),
            measured('lowOilSetting', 'Cutout setting', 'pressure_differential', 'psid'),
            measured('lowOilTripValue', 'Oil pressure at the trip', 'pressure_differential', 'psid'),
            computed('lowOilTripError', 'Low oil pressure trip: deviation from the setting', 'percent', '%', 'designDeviationPct(lowOilTripValue, lowOilSetting)',
              { type: 'range', min: -5, warnMin: -2.5, max: 10, warnMax: 5 },
              { help: 'Percent above (+) or below (−) the setting. Tripping late (below the setting) is the dangerous side. Common practice: fail beyond 5 % late, marginal beyond 2.5 %; fail beyond 10 % early, marginal beyond 5 %.' }),
          ],
        },
        {
          id: 'trip-restore',
          title: 'After the tests',
          fields: [
            yesNo('settingsRestored', 'Every setting changed for the tests is back at its service value, and checked'),
            text('safetyTestNotes', 'Notes on the safety tests', { required: false }),
          ],
        },
      ],
    },
    {
      id: 'training',
      title: 'Owner training',
      steps: [
        {
          id: 'training-record',
          title: 'Training record',
          fields: [
            text('trainingTopics', 'Topics covered', {
              help: 'For example: starting and stopping, alarms and what they mean, the safeties and why they are never bypassed, the daily log, standby lubrication, seasonal shutdown, who to call.',
            }),
            text('trainingAttendees', 'Attendees (names and roles)'),
            text('trainingGivenBy', 'Training given by'),
            measured('trainingHours', 'Length of the training', 'time', 'h', undefined, { required: false }),
            yesNo('manualsHandedOver', 'Operation and maintenance manuals handed over'),
            photo('attendanceSheet', 'Signed attendance sheet', { required: false }),
          ],
        },
      ],
    },
    {
      id: 'handover',
      title: 'Maintenance handover',
      steps: [
        {
          id: 'recurring-tasks',
          title: 'Recurring tasks the owner must keep',
          help: "Answer yes when the task and its interval have been explained to, and accepted by, the owner's staff. The intervals are common practice; the manufacturer's maintenance schedule governs.",
          fields: [
            yesNo('taskStandbyLubrication', 'Standby lubrication explained and left enabled: while the machine is idle the oil pump runs for about 90 s every 24 h'),
            choice('taskHandTurning', 'Turning the drive train by hand while idle',
              [['explained', 'Explained: after lockout, a few turns by hand every 6 weeks to 2 months to keep the shaft seal wetted'], ['hermetic', 'Not applicable: hermetic motor, which cannot be turned by hand'], ['not_explained', 'Not explained']],
              ['explained', 'hermetic'], [], { cautions: [LOCKOUT, COUPLINGS] }),
            yesNo('taskTubeBrushing', 'Yearly: brush the condenser and evaporator tubes', {
              help: 'Fouled tubes raise the approaches and cost capacity and kW/ton.',
            }),
            yesNo('taskOilFilter', 'Yearly: change the oil filter'),
            choice('taskStarterCoolant', 'Yearly: change the starter coolant',
              [['explained', 'Explained'], ['air_cooled', 'Not applicable: air-cooled starter'], ['not_explained', 'Not explained']],
              ['explained', 'air_cooled']),
            yesNo('taskOilAnalysis', 'Yearly: take an oil sample for laboratory analysis'),
            yesNo('taskLeakInspections', 'Refrigerant leak inspections and the refrigerant log kept as the regulations require'),
            text('handoverNotes', 'Other tasks agreed, and notes', { required: false }),
          ],
        },
      ],
    },
  ],
}
