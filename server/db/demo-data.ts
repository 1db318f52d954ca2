import type { DataSource } from 'typeorm'
import type { Role } from '@shared/types/roles'
import { designPointSchemaFor, type EquipmentKind } from '@shared/schemas/design-point'
import { hashPassword } from '../auth/passwords'
import { Equipment, Organization, Project, ProjectMember, User } from '../entities'
import { canonicalDesignPoint } from '@shared/format/design-point'
import { installStarterLibrary } from '../services/starter-library'

/**
 * The demo scenario (every name invented): a commissioning firm starting chillers on two projects,
 * with one or more people of each role. Passwords are printed in the README for the demo only.
 */
export const DEMO_FIRM = 'Tallowmere Commissioning Group'

export const DEMO_PEOPLE: { email: string; displayName: string; role: Role; password: string }[] = [
  { email: 'dana.whitlock@tallowmere.test', displayName: 'Dana Whitlock', role: 'admin', password: 'admin-demo-2026' },
  { email: 'rafe.okafor@tallowmere.test', displayName: 'Rafe Okafor', role: 'technician', password: 'tech-demo-2026' },
  { email: 'ines.marlow@tallowmere.test', displayName: 'Ines Marlow', role: 'technician', password: 'tech-demo-2026' },
  { email: 'maren.solvik@vexleyhealth.test', displayName: 'Maren Solvik', role: 'owner_rep', password: 'owner-demo-2026' },
  { email: 'priya.halden@corranpoly.test', displayName: 'Priya Halden', role: 'owner_rep', password: 'owner-demo-2026' },
  { email: 'theo.brannick@pellworthmech.test', displayName: 'Theo Brannick', role: 'contractor', password: 'closeout-demo-2026' },
]

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

function pump(tag: string, service: string, location: string, serialNumber: string, gpm: number, headFt: number, hp: number, fla: number) {
  return {
    tag,
    kind: 'pump',
    location,
    manufacturer: 'Quarrington Pump Co.',
    model: 'QP-8x6-13',
    serialNumber,
    yearBuilt: 2025,
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

const DEMO_PROJECTS = [
  {
    code: 'VXH-CUP',
    name: 'Vexley General Hospital — central utility plant chiller replacement',
    siteName: 'Vexley General Hospital',
    siteAddress: '1400 Fernhollow Road, Marrowick, IL 60999',
    timeZone: 'America/Chicago',
    unitSystem: 'IP' as const,
    reportPaper: 'Letter' as const,
    distributionList: ['facilities.records@vexleyhealth.test', 'closeout@pellworthmech.test'],
    members: ['rafe.okafor@tallowmere.test', 'ines.marlow@tallowmere.test', 'maren.solvik@vexleyhealth.test', 'theo.brannick@pellworthmech.test'],
    equipment: [
      demoChiller('CH-1', 'Central utility plant, chiller bay east', 'HX-24-0311'),
      demoChiller('CH-2', 'Central utility plant, chiller bay west', 'HX-24-0312'),
      pump('CHWP-1', 'chilled_water', 'Primary chilled-water pump 1', 'QP-25-7781', 1200, 85, 40, 48),
      pump('CWP-1', 'condenser_water', 'Condenser-water pump 1', 'QP-25-7790', 1500, 70, 40, 47),
    ],
  },
  {
    code: 'CRP-B4',
    name: 'Corran Polytechnic — Building 4 cooling plant',
    siteName: 'Corran Polytechnic, North Campus',
    siteAddress: '88 Quillon Avenue, Harwick Bay, ON K0X 9Z9',
    timeZone: 'America/Toronto',
    unitSystem: 'SI' as const,
    reportPaper: 'A4' as const,
    distributionList: ['plant.operations@corranpoly.test'],
    members: ['ines.marlow@tallowmere.test', 'priya.halden@corranpoly.test', 'theo.brannick@pellworthmech.test'],
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
    ],
  },
]

/** Whether the database holds no people yet (the demo data loads only then). */
export async function isEmpty(db: DataSource): Promise<boolean> {
  return (await db.getRepository(User).count()) === 0
}

/** Loads the demo scenario in one transaction. */
export async function loadDemoData(db: DataSource): Promise<void> {
  await db.transaction(async (tx) => {
    const org = await tx.getRepository(Organization).save({ name: DEMO_FIRM })
    const hashes = new Map<string, string>()
    for (const password of new Set(DEMO_PEOPLE.map((p) => p.password))) hashes.set(password, await hashPassword(password))
    const users = await tx.getRepository(User).save(
      DEMO_PEOPLE.map((p) => ({
        organizationId: org.id,
        email: p.email,
        displayName: p.displayName,
        role: p.role,
        passwordHash: hashes.get(p.password)!,
        active: true,
      })),
    )
    const byEmail = new Map(users.map((u) => [u.email, u]))
    await installStarterLibrary(tx, org.id, users.find((u) => u.role === 'admin')!.id)
    for (const { members, equipment, ...fields } of DEMO_PROJECTS) {
      const project = await tx.getRepository(Project).save({ ...fields, organizationId: org.id })
      await tx.getRepository(ProjectMember).save(members.map((email) => ({ projectId: project.id, userId: byEmail.get(email)!.id })))
      for (const { designPoint, ...item } of equipment) {
        // Demo data goes through the same schema as the API, so it can never hold a design point the API would refuse.
        const checked = await designPointSchemaFor(item.kind as EquipmentKind).validate(designPoint, { abortEarly: false })
        const stored = canonicalDesignPoint(checked as Record<string, unknown>)
        await tx.getRepository(Equipment).save({
          ...item,
          projectId: project.id,
          notes: '',
          refrigerant: typeof stored.refrigerant === 'string' ? stored.refrigerant : null,
          designPoint: stored,
          nameplatePhotoId: null,
        })
      }
    }
  })
}
