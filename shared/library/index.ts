import type { ChecklistDefinition } from '../schemas/checklist'
import type { EquipmentKind } from '../schemas/design-point'
import { chillerStartupDefinition } from './chiller'
import { pumpStartupDefinition } from './pump'

/** A template of the starter library: loaded with the demo data and always available to a new organisation. */
export interface StarterTemplate {
  /** Stable key, lower-case words joined by hyphens (as `templateCreateSchema` requires). */
  key: string
  name: string
  equipmentKind: EquipmentKind
  description: string
  /** The changelog entry of its first published version. */
  changelog: string
  /**
   * The library's revision of this template. A firm whose newest version came from an older revision gets this one as a
   * new published version (runs pinned to the old version keep it, and their reports are untouched).
   */
  revision: number
  /** What changed in this revision, for the new version's changelog. */
  revisionNote: string
  definition: ChecklistDefinition
}

export const STARTER_LIBRARY: StarterTemplate[] = [
  {
    key: 'centrifugal-chiller-startup',
    name: 'Water-cooled centrifugal chiller start-up',
    equipmentKind: 'centrifugal_chiller',
    description:
      'Pre-start inspection, pre-lubrication and oil-pressure proving, starter ramp, running checks against the design point (voltage and current unbalance, oil, approaches, capacity, kW/ton, heat balance, setpoint), safety control trip tests, owner training and the maintenance handover.',
    changelog:
      'First version: limits that depend on the machine come from its design point; the other limits are common-practice defaults, stated in each field’s help.',
    revision: 2,
    revisionNote:
      'Dispositions instead of one "not applicable": not applicable, done by others, verified earlier, deferred, not done. The pre-work safety step cannot be set aside and a "No" there stops the run. Values without an acceptance criterion are recorded, not passed. A test-conditions step (capacity control, condenser-water control, load, site barometric pressure); capacity and efficiency judged with the AHRI 550/590 tolerance at the measured load; building- and tower-driven water temperatures recorded with their deviation from design; water-side heat from the properties of water; the oil-pressure ramp follows the machine’s own setpoint.',
    definition: chillerStartupDefinition,
  },
  {
    key: 'pump-startup',
    name: 'Chilled-water or condenser-water pump start-up',
    equipmentKind: 'pump',
    description:
      'Pre-start inspection, shaft alignment and soft foot, rotation, flow and head against the pump curve point, motor voltage and current with unbalance, vibration, noise and seal leakage.',
    changelog:
      'First version: flow, head, speed, voltage and current against the pump design point; alignment and vibration limits are common-practice defaults for pumps up to 1800 rpm, stated in each field’s help.',
    revision: 2,
    revisionNote:
      'Dispositions instead of one "not applicable": not applicable, done by others, verified earlier, deferred, not done. Values without an acceptance criterion are recorded, not passed.',
    definition: pumpStartupDefinition,
  },
]

export { chillerStartupDefinition, pumpStartupDefinition }
