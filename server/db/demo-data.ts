import type { DataSource } from 'typeorm'
import type { Role } from '@shared/types/roles'
import { hashPassword } from '../auth/passwords'
import { Organization, Project, ProjectMember, User } from '../entities'

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

const DEMO_PROJECTS = [
  {
    code: 'VXH-CUP',
    name: 'Vexley General Hospital — central utility plant chiller replacement',
    siteName: 'Vexley General Hospital',
    siteAddress: '1400 Fernhollow Road, Marrowick, IL 60999',
    timeZone: 'America/Chicago',
    unitSystem: 'IP' as const,
    members: ['rafe.okafor@tallowmere.test', 'ines.marlow@tallowmere.test', 'maren.solvik@vexleyhealth.test', 'theo.brannick@pellworthmech.test'],
  },
  {
    code: 'CRP-B4',
    name: 'Corran Polytechnic — Building 4 cooling plant',
    siteName: 'Corran Polytechnic, North Campus',
    siteAddress: '88 Quillon Avenue, Harwick Bay, ON K0X 9Z9',
    timeZone: 'America/Toronto',
    unitSystem: 'SI' as const,
    members: ['ines.marlow@tallowmere.test', 'priya.halden@corranpoly.test', 'theo.brannick@pellworthmech.test'],
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
    for (const { members, ...fields } of DEMO_PROJECTS) {
      const project = await tx.getRepository(Project).save({ ...fields, organizationId: org.id })
      await tx.getRepository(ProjectMember).save(members.map((email) => ({ projectId: project.id, userId: byEmail.get(email)!.id })))
    }
  })
}
