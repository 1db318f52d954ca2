import type { DataSource } from 'typeorm'
import { designPointSchemaFor, type EquipmentKind } from '@shared/schemas/design-point'
import { canonicalDesignPoint } from '@shared/format/design-point'
import { hashPassword } from '../auth/passwords'
import { ChecklistTemplate, Equipment, Organization, Project, ProjectMember, Report, User } from '../entities'
import { recordAudit } from '../services/audit.service'
import { installStarterLibrary } from '../services/starter-library'
import { DEMO_ATTENDEES, DEMO_HISTORY } from './demo/history'
import { DEMO_FIRM, DEMO_PEOPLE, DEMO_PROJECTS, demoChiller } from './demo/plant'
import { acceptRun, demoServices, DemoClock, fillRun, transactionScoped, type Actor, type FilledRun } from './demo/replay'
import { rng, type DesignValues } from './demo/readings'
import { signatureDataUrl } from './demo/signature-image'

export { DEMO_FIRM, DEMO_PEOPLE, DEMO_PROJECTS, DEMO_HISTORY, demoChiller }

/** Whether the database holds no people yet (the demo data loads only then). */
export async function isEmpty(db: DataSource): Promise<boolean> {
  return (await db.getRepository(User).count()) === 0
}

const DAY_MS = 86_400_000

/** The UTC instant of a wall-clock time in `timeZone` (two passes settle the offset across a daylight-saving change). */
export function zonedTime(year: number, month: number, day: number, hours: number, timeZone: string): Date {
  const wall = Date.UTC(year, month - 1, day, Math.floor(hours), Math.round((hours % 1) * 60))
  let t = wall
  for (let i = 0; i < 2; i++) {
    const p = Object.fromEntries(
      new Intl.DateTimeFormat('en-CA', { timeZone, year: 'numeric', month: '2-digit', day: '2-digit', hour: '2-digit', minute: '2-digit', hourCycle: 'h23' })
        .formatToParts(new Date(t))
        .map((x) => [x.type, x.value]),
    )
    const shown = Date.UTC(Number(p.year), Number(p.month) - 1, Number(p.day), Number(p.hour), Number(p.minute))
    t += wall - shown
  }
  return new Date(t)
}

/** The calendar day `daysAgo` before `now` in `timeZone`, moved back to the Friday before when it falls on a weekend. */
function workingDay(now: Date, daysAgo: number, timeZone: string, forwardBy = 0): { y: number; m: number; d: number; label: string } {
  const local = (t: number) => {
    const p = Object.fromEntries(new Intl.DateTimeFormat('en-CA', { timeZone, year: 'numeric', month: '2-digit', day: '2-digit' }).formatToParts(new Date(t)).map((x) => [x.type, x.value]))
    return { y: Number(p.year), m: Number(p.month), d: Number(p.day) }
  }
  const { y, m, d } = local(now.getTime() - daysAgo * DAY_MS)
  const date = new Date(Date.UTC(y, m - 1, d))
  while ([0, 6].includes(date.getUTCDay())) date.setUTCDate(date.getUTCDate() - 1)
  for (let added = 0; added < forwardBy; ) {
    date.setUTCDate(date.getUTCDate() + 1)
    if (![0, 6].includes(date.getUTCDay())) added += 1
  }
  return { y: date.getUTCFullYear(), m: date.getUTCMonth() + 1, d: date.getUTCDate(), label: date.toISOString().slice(0, 10) }
}

export interface DemoLoadSummary {
  runs: number
  reports: number
}

/**
 * Loads the demo scenario — firm, people, projects, equipment, the starter library and three years of accepted
 * start-ups — in one transaction: it commits whole or not at all, so a failed load leaves an empty database and the
 * next `npm start` simply tries again.
 *
 * The history goes through the product's own services (run, finding, signing, report), so readings are judged by the
 * shared rules, signatures carry the snapshot SHA-256 they signed and every change has its audit event. Back-dating:
 * those services read the time from an injected clock (`server/services/clock.ts`, the system clock everywhere else);
 * here it is a `DemoClock` set to each invented moment, so every stamp is written once, as it would have been on the
 * day — the database's freeze triggers (accepted runs, signatures, the append-only audit trail) never have to be
 * bypassed, and the snapshot hashes need no recomputing because time is not part of what is signed. The reports are
 * left pending with their archive columns filled; the report queue renders and seals them when the product starts.
 *
 * `history: false` loads only the firm, people, projects, equipment and library: the browser tests start the product
 * many times and do not need three years of reports rendering behind them.
 */
export async function loadDemoData(db: DataSource, options: { now?: Date; history?: boolean } = {}): Promise<DemoLoadSummary> {
  const now = options.now ?? new Date()
  const ago = (days: number) => new Date(now.getTime() - days * DAY_MS)
  return db.transaction(async (tx) => {
    const clock = new DemoClock()
    const scoped = transactionScoped(tx)
    const services = demoServices(scoped, clock)
    const firstDay = Math.max(...DEMO_PROJECTS.map((p) => p.createdDaysAgo)) + 10

    const org = await tx.getRepository(Organization).save({ name: DEMO_FIRM, createdAt: ago(firstDay) })
    const hashes = new Map<string, string>()
    for (const password of new Set(DEMO_PEOPLE.map((p) => p.password))) hashes.set(password, await hashPassword(password))
    // Each person joins a little before the first project they work on; the firm's admin and its first technicians at the start.
    const joined = (email: string) => {
      const first = DEMO_PROJECTS.filter((p) => p.members.includes(email)).map((p) => p.createdDaysAgo)
      return first.length ? Math.max(...first) + 5 : firstDay
    }
    const users = await tx.getRepository(User).save(
      DEMO_PEOPLE.map((p) => {
        const at = ago(p.role === 'admin' ? firstDay : joined(p.email))
        return { organizationId: org.id, email: p.email, displayName: p.displayName, role: p.role, passwordHash: hashes.get(p.password)!, active: true, createdAt: at, updatedAt: at }
      }),
    )
    const byEmail = new Map(users.map((u) => [u.email, u]))
    const admin = users.find((u) => u.role === 'admin')!
    await installStarterLibrary(tx, org.id, admin.id, ago(firstDay - 1))
    const templates = new Map((await tx.getRepository(ChecklistTemplate).findBy({ organizationId: org.id })).map((t) => [t.equipmentKind, t.id]))

    const actors = new Map<string, Actor>()
    for (const p of DEMO_PEOPLE) {
      const u = byEmail.get(p.email)!
      actors.set(p.email, { user: { id: u.id, email: u.email, displayName: u.displayName, role: u.role, organizationName: org.name }, password: p.password, signature: await signatureDataUrl(p.displayName) })
    }

    const projects = new Map<string, { row: Project; equipment: Map<string, Equipment>; rep: string; attendees: string }>()
    for (const { members, equipment, createdDaysAgo, ...fields } of DEMO_PROJECTS) {
      const created = ago(createdDaysAgo)
      const project = await tx.getRepository(Project).save({ ...fields, organizationId: org.id, createdAt: created, updatedAt: created })
      await tx.getRepository(ProjectMember).save(members.map((email) => ({ projectId: project.id, userId: byEmail.get(email)!.id, addedAt: created })))
      const items = new Map<string, Equipment>()
      for (const { designPoint, ...item } of equipment) {
        // Demo data goes through the same schema as the API, so it can never hold a design point the API would refuse.
        const checked = await designPointSchemaFor(item.kind as EquipmentKind).validate(designPoint, { abortEarly: false })
        const stored = canonicalDesignPoint(checked as Record<string, unknown>)
        const at = ago(createdDaysAgo - 2)
        items.set(item.tag, await tx.getRepository(Equipment).save({
          ...item,
          projectId: project.id,
          notes: '',
          refrigerant: typeof stored.refrigerant === 'string' ? stored.refrigerant : null,
          designPoint: stored,
          nameplatePhotoId: null,
          createdAt: at,
          updatedAt: at,
        }))
      }
      const rep = members.find((email) => DEMO_PEOPLE.find((p) => p.email === email)?.role === 'owner_rep')!
      projects.set(project.code, { row: project, equipment: items, rep, attendees: DEMO_ATTENDEES[project.code] ?? '' })
    }

    if (options.history === false) return { runs: 0, reports: 0 }

    // The history as one timeline: each run is filled on its day, and every acceptance (and the one deactivation)
    // that falls before the next run's start happens first, so report numbers follow the acceptance dates.
    type Pending = { at: Date; act: () => Promise<void> }
    const pending: Pending[] = []
    const flushUntil = async (until: Date) => {
      pending.sort((a, b) => a.at.getTime() - b.at.getTime())
      while (pending.length && pending[0].at <= until) {
        const next = pending.shift()!
        clock.set(next.at)
        await next.act()
      }
    }
    for (const person of DEMO_PEOPLE.filter((p) => p.deactivatedDaysAgo !== undefined)) {
      const u = byEmail.get(person.email)!
      const at = zonedTimeOfDay(ago(person.deactivatedDaysAgo!), 'America/Chicago', 16.5)
      pending.push({
        at,
        act: async () => {
          await tx.getRepository(User).update(u.id, { active: false, updatedAt: clock.now() })
          await recordAudit(tx, {
            actorId: admin.id, action: 'user.update', entityType: 'user', entityId: u.id,
            before: { displayName: u.displayName, role: u.role, active: true }, after: { displayName: u.displayName, role: u.role, active: false },
            occurredAt: clock.now(),
          })
        },
      })
    }

    const filled = new Map<string, FilledRun & { accepted?: { reportNumber: string; on: string } }>()
    const busyUntil = new Map<string, Date>()
    let stream = 20231
    for (const plan of DEMO_HISTORY) {
      const project = projects.get(plan.project)!
      const tz = project.row.timeZone
      const day = workingDay(now, plan.daysAgo, tz)
      const dayStart = (hours: number) => zonedTime(day.y, day.m, day.d, hours, tz)
      const equipment = project.equipment.get(plan.tag)!
      const start = new Date(Math.max(dayStart(equipment.kind === 'pump' ? 8 : 7.5).getTime(), (busyUntil.get(`${plan.technician}/${day.label}`)?.getTime() ?? 0) + 25 * 60_000))
      await flushUntil(start)
      clock.set(start)
      const previous = plan.retestOf ? filled.get(plan.retestOf) : undefined
      if (plan.retestOf && !previous?.accepted) throw new Error(`demo run ${plan.id} re-tests ${plan.retestOf}, which is not accepted before it`)
      const run = await fillRun(services, clock, rng(stream++), plan, {
        tech: actors.get(plan.technician)!,
        equipment: { id: equipment.id, kind: equipment.kind, designPoint: equipment.designPoint as DesignValues },
        templateId: templates.get(equipment.kind)!,
        unitSystem: project.row.unitSystem,
        dayStart,
        attendees: project.attendees,
        retest: previous?.accepted ? { of: previous, reportNumber: previous.accepted.reportNumber, acceptedOn: previous.accepted.on } : undefined,
      })
      busyUntil.set(`${plan.technician}/${day.label}`, clock.now())
      const record: FilledRun & { accepted?: { reportNumber: string; on: string } } = run
      filled.set(plan.id, record)
      // The owner's representative signs on a later working day, in the morning or early afternoon — or, on the day
      // itself, a while after the performer.
      const acceptDay = workingDay(now, plan.daysAgo, tz, plan.acceptAfterDays)
      const r = rng(stream * 7)
      const acceptAt = plan.acceptAfterDays === 0
        ? new Date(run.performerSignedAt.getTime() + r.between(30, 80) * 60_000)
        : zonedTime(acceptDay.y, acceptDay.m, acceptDay.d, r.between(9.5, 15.5), tz)
      if (acceptAt >= now) throw new Error(`demo run ${plan.id} would be accepted in the future`)
      pending.push({
        at: acceptAt,
        act: async () => {
          await acceptRun(services, actors.get(project.rep)!, run.runId)
          const report = await tx.getRepository(Report).findOneByOrFail({ runId: run.runId })
          record.accepted = { reportNumber: report.reportNumber, on: acceptDay.label }
        },
      })
    }
    await flushUntil(now)
    const reports = await tx.getRepository(Report).countBy({ status: 'pending' })
    return { runs: DEMO_HISTORY.length, reports }
  })
}

/** `hours` o'clock on the local day of `date` in `timeZone`. */
function zonedTimeOfDay(date: Date, timeZone: string, hours: number): Date {
  const p = Object.fromEntries(new Intl.DateTimeFormat('en-CA', { timeZone, year: 'numeric', month: '2-digit', day: '2-digit' }).formatToParts(date).map((x) => [x.type, x.value]))
  return zonedTime(Number(p.year), Number(p.month), Number(p.day), hours, timeZone)
}

