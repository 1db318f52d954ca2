// Fills an empty, migrated Startproof database with an archive of invented issued reports, set-based (INSERT … SELECT
// over generate_series), in the order the freeze triggers allow: runs go in as submitted with their steps, findings
// and signatures, are then accepted, and their ready reports are inserted last (a report is frozen only on UPDATE).
// Every name here is invented.
import type { QueryRunner } from 'typeorm'
import { STARTER_LIBRARY } from '../../shared/library'

export interface FillOptions {
  reports: number
  projects: number
  /** Seeds random() for the fill, so runs with the same seed have the same shape (ids differ). */
  seed: number
}

export interface FillResult {
  organizationId: string
  adminId: string
  contractorId: string
  technicianIds: string[]
  counts: Record<string, number>
}

/** A small seeded generator for the rows built in TypeScript (people, projects, templates). */
function prng(seed: number) {
  let a = seed >>> 0
  return () => {
    a = (a + 0x6d2b79f5) >>> 0
    let t = a
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
}

const FIRST = ['Aldo', 'Brisa', 'Corin', 'Delphine', 'Emrys', 'Fenna', 'Galen', 'Hollis', 'Ilse', 'Jory', 'Kestrel', 'Linnea', 'Marek', 'Nadia', 'Orrin', 'Perrin', 'Quilla', 'Rosalind', 'Soren', 'Tamsin', 'Ulla', 'Vesna', 'Wynn', 'Yara', 'Zeno', 'Odile', 'Bram', 'Cato', 'Elke', 'Idris']
const NAME_HEAD = ['Ash', 'Brack', 'Cast', 'Dun', 'Elv', 'Farr', 'Glen', 'Hask', 'Ives', 'Jass', 'Kell', 'Lorn', 'Mav', 'Nor', 'Orl', 'Penn', 'Quen', 'Rav', 'Stel', 'Tarr']
const NAME_TAIL = ['vane', 'low', 'rell', 'moor', 'erin', 'wick', 'varr', 'by', 'dale', 'mere', 'holt', 'stead']
const SITES = ['General Hospital', 'Medical Centre', 'Polytechnic', 'University campus', 'Civic offices', 'Data hall', 'Airport terminal', 'Office tower', 'Research institute', 'Arena', 'Courthouse', 'Transit depot']
const SCOPES = ['central utility plant', 'chiller replacement', 'cooling plant expansion', 'energy centre', 'plant room retrofit', 'new cooling plant']
const ZONES = [
  ['America/New_York', 'IP'], ['America/Chicago', 'IP'], ['America/Denver', 'IP'], ['America/Los_Angeles', 'IP'],
  ['Europe/London', 'SI'], ['Europe/Berlin', 'SI'], ['Australia/Sydney', 'SI'],
] as const

/** Step notes a technician writes (english text: the third, unweighted part of the search vector). */
const NOTES = [
  'Oil heater energised 24 hours before start; sump temperature steady',
  'Phase rotation confirmed at the starter terminals',
  'Condenser strainer cleaned before the flow test',
  'Evaporator flow balanced at the triple-duty valve',
  'Vibration readings taken at both bearings',
  'Soft starter ramp time adjusted to 12 seconds',
  'Low oil pressure cut-out tripped at setpoint',
  'High condenser pressure switch tested with condenser water throttled',
  'Refrigerant charge topped up after the leak check',
  'Pump coupling realigned after soft foot correction',
  'Owner operators trained on the control panel',
  'Chilled water setpoint reset schedule verified',
  'Flow switch paddle replaced before proving',
  'Motor insulation resistance well above minimum',
  'Seal leakage within the stated limits',
  'Approach temperatures logged at full load',
  'Heat balance closed within five percent',
  'Purge unit run time recorded',
  'Building load too low for a full capacity test; tested at part load',
  'Cooling tower fans cycled during the test',
  'Isolation valves tagged and locked open',
  'Thermometer wells filled with conductive compound',
]
const FINDINGS = [
  'Condenser water flow below design',
  'Oil pressure slow to prove on first start',
  'Voltage unbalance above limit on phase B',
  'Evaporator pressure drop high: strainer partly blocked',
  'Leaving chilled water temperature hunting around setpoint',
  'Pump vibration above limit at the outboard bearing',
  'Missing isolation valve tag',
  'Insulation damaged on the suction line',
  'Flow switch wiring loose in the junction box',
  'Starter overload setting above nameplate current',
  'Mechanical seal weeping at the gland',
  'Thermometer well empty at the evaporator outlet',
]
const RESOLUTIONS = ['Strainer cleaned and retested', 'Setting corrected and verified', 'Repaired by the installing contractor', 'Part replaced and retested', 'Wiring tightened and proven']
const CHILLER_STEPS = ['prestart', 'first-start', 'running', 'safeties', 'handover']
const PUMP_STEPS = ['prestart', 'alignment', 'running', 'vibration', 'handover']

const sqlArray = (xs: readonly string[]) => `ARRAY[${xs.map((x) => `'${x.replace(/'/g, "''")}'`).join(', ')}]::text[]`
/** One element of a text array literal, chosen per row (an expression in the select list, not an init-plan). */
const pick = (xs: readonly string[]) => `(${sqlArray(xs)})[1 + floor(random() * ${xs.length})::int]`

export async function fillArchive(qr: QueryRunner, opts: FillOptions, log: (line: string) => void): Promise<FillResult> {
  const rnd = prng(opts.seed)
  const q = (sql: string, params?: unknown[]) => qr.query(sql, params)
  const step = async (label: string, sql: string, params?: unknown[]) => {
    const t = performance.now()
    await q(sql, params)
    log(`  ${label.padEnd(52)} ${((performance.now() - t) / 1000).toFixed(1)} s`)
  }
  await q(`SELECT setseed($1)`, [(opts.seed % 1000) / 1000])

  const [{ id: organizationId }] = await q(`INSERT INTO organization (name) VALUES ('Orlmere Commissioning Services') RETURNING id`)

  // People: two admins, technicians, owner's representatives and contractors' closeout staff.
  const used = new Set<string>()
  const person = () => {
    for (;;) {
      const first = FIRST[Math.floor(rnd() * FIRST.length)]
      const last = NAME_HEAD[Math.floor(rnd() * NAME_HEAD.length)] + NAME_TAIL[Math.floor(rnd() * NAME_TAIL.length)]
      if (!used.has(first + last)) {
        used.add(first + last)
        return { name: `${first} ${last}`, local: `${first}.${last}`.toLowerCase() }
      }
    }
  }
  const roles: [string, number, string][] = [['admin', 2, 'orlmere.test'], ['technician', 16, 'orlmere.test'], ['owner_rep', 60, 'owners.test'], ['contractor', 15, 'closeout.test']]
  const people: { name: string; email: string; role: string }[] = []
  for (const [role, n, domain] of roles) for (let i = 0; i < n; i++) { const p = person(); people.push({ name: p.name, email: `${p.local}@${domain}`, role }) }
  const userRows: { id: string; role: string }[] = await q(
    `INSERT INTO app_user (organization_id, email, display_name, role, password_hash)
     SELECT $1, e, n, r, 'bench-no-sign-in' FROM unnest($2::text[], $3::text[], $4::text[]) AS u(e, n, r) RETURNING id, role`,
    [organizationId, people.map((p) => p.email), people.map((p) => p.name), people.map((p) => p.role)],
  )
  const byRole = (role: string) => userRows.filter((u) => u.role === role).map((u) => u.id)
  const [admins, technicians, ownerReps, contractors] = [byRole('admin'), byRole('technician'), byRole('owner_rep'), byRole('contractor')]

  // Projects over ~5 years; each runs a few months to a couple of years and has three technicians and an owner's rep.
  const end = Date.now() - 86400_000
  const start = end - 5 * 365 * 86400_000
  const projects = Array.from({ length: opts.projects }, (_, i) => {
    const [zone, units] = ZONES[Math.floor(rnd() * ZONES.length)]
    const place = NAME_HEAD[Math.floor(rnd() * NAME_HEAD.length)] + NAME_TAIL[Math.floor(rnd() * NAME_TAIL.length)]
    const spanDays = Math.round(90 + rnd() ** 1.5 * 630)
    const startAt = new Date(start + rnd() * (end - start - spanDays * 86400_000 * 0.5))
    const equipment = 5 + Math.floor(rnd() ** 2 * 70)
    const techs = [...technicians].sort(() => rnd() - 0.5).slice(0, 3)
    return {
      code: `PRJ-${String(i + 1).padStart(4, '0')}`,
      name: `${place} ${SITES[Math.floor(rnd() * SITES.length)]} — ${SCOPES[Math.floor(rnd() * SCOPES.length)]}`,
      site: `${place} ${SITES[Math.floor(rnd() * SITES.length)]}`,
      address: `${1 + Math.floor(rnd() * 900)} ${NAME_HEAD[Math.floor(rnd() * NAME_HEAD.length)]}${NAME_TAIL[Math.floor(rnd() * NAME_TAIL.length)]} Road`,
      zone, units, startAt: startAt.toISOString(), spanDays, equipment,
      chillers: Math.max(1, Math.round(equipment * 0.25)),
      techs, owner: ownerReps[Math.floor(rnd() * ownerReps.length)],
    }
  })
  await q(`CREATE TEMP TABLE bench_project (id uuid, ord int, start_at timestamptz, span_days int, n_equipment int, n_chillers int, techs uuid[], owner uuid, paper text)`)
  await q(
    `WITH ins AS (
       INSERT INTO project (organization_id, code, name, site_name, site_address, time_zone, unit_system, report_paper, distribution_list)
       SELECT $1, c, n, s, a, z, u, CASE u WHEN 'SI' THEN 'A4' ELSE 'Letter' END, ARRAY['closeout@' || lower(c) || '.test']
         FROM unnest($2::text[], $3::text[], $4::text[], $5::text[], $6::text[], $7::text[]) AS p(c, n, s, a, z, u)
       RETURNING id, code, report_paper)
     INSERT INTO bench_project
     SELECT ins.id, x.ord, x.start_at, x.span_days, x.n_equipment, x.n_chillers,
            (SELECT array_agg(t::uuid) FROM jsonb_array_elements_text(x.techs) t), x.owner, ins.report_paper
       FROM ins JOIN jsonb_to_recordset($8::jsonb) AS x(code text, ord int, start_at timestamptz, span_days int, n_equipment int, n_chillers int, techs jsonb, owner uuid)
         ON x.code = ins.code`,
    [
      organizationId, projects.map((p) => p.code), projects.map((p) => p.name), projects.map((p) => p.site), projects.map((p) => p.address),
      projects.map((p) => p.zone), projects.map((p) => p.units),
      JSON.stringify(projects.map((p, ord) => ({ code: p.code, ord, start_at: p.startAt, span_days: p.spanDays, n_equipment: p.equipment, n_chillers: p.chillers, techs: p.techs, owner: p.owner }))),
    ],
  )
  // Members: the project's technicians and owner's rep; each contractor closes out ~20 projects (the first exactly 20).
  const members: [number, string][] = []
  projects.forEach((p, ord) => { for (const t of p.techs) members.push([ord, t]); members.push([ord, p.owner]) })
  contractors.forEach((c) => {
    const n = c === contractors[0] ? 20 : 14 + Math.floor(rnd() * 13)
    const chosen = new Set<number>()
    while (chosen.size < Math.min(n, projects.length)) chosen.add(Math.floor(rnd() * projects.length))
    for (const ord of chosen) members.push([ord, c])
  })
  await q(
    `INSERT INTO project_member (project_id, user_id)
     SELECT DISTINCT p.id, m.u FROM unnest($1::int[], $2::uuid[]) AS m(ord, u) JOIN bench_project p ON p.ord = m.ord`,
    [members.map((m) => m[0]), members.map((m) => m[1])],
  )

  // Templates: the starter library plus invented re-test checklists; three versions each (two retired, one published).
  const templates = [
    ...STARTER_LIBRARY.map((t) => ({ key: t.key, name: t.name, kind: t.equipmentKind, definition: t.definition, reuse: 1 })),
    { key: 'chiller-annual-performance', name: 'Centrifugal chiller annual performance verification', kind: 'centrifugal_chiller', definition: STARTER_LIBRARY[0].definition, reuse: 0.6 },
    { key: 'chiller-safeties-reproving', name: 'Chiller safety controls re-proving', kind: 'centrifugal_chiller', definition: STARTER_LIBRARY[0].definition, reuse: 0.5 },
    { key: 'pump-seasonal-retest', name: 'Pump seasonal re-test', kind: 'pump', definition: STARTER_LIBRARY[1].definition, reuse: 0.6 },
    { key: 'pump-vibration-alignment', name: 'Pump vibration and alignment check', kind: 'pump', definition: STARTER_LIBRARY[1].definition, reuse: 0.4 },
  ]
  await q(`CREATE TEMP TABLE bench_template (id uuid, kind text, name text, reuse float8, v1 uuid, v2 uuid, v3 uuid, v2_at timestamptz, v3_at timestamptz)`)
  const v2At = new Date(start + (end - start) * 0.35).toISOString()
  const v3At = new Date(start + (end - start) * 0.75).toISOString()
  for (const t of templates) {
    const [{ id }] = await q(
      `INSERT INTO checklist_template (organization_id, key, name, equipment_kind, description) VALUES ($1, $2, $3, $4, 'Invented checklist for the archive benchmark') RETURNING id`,
      [organizationId, t.key, t.name, t.kind],
    )
    const at = [new Date(start - 30 * 86400_000).toISOString(), v2At, v3At]
    const versions: { id: string }[] = await q(
      `INSERT INTO template_version (template_id, number, status, definition, changelog, created_by, published_by, published_at, retired_by, retired_at)
       SELECT $1, n, CASE WHEN n < 3 THEN 'retired' ELSE 'published' END, $2::jsonb, 'Version ' || n, $3, $3, a,
              CASE WHEN n < 3 THEN $3::uuid END, CASE WHEN n < 3 THEN ($4::timestamptz[])[n + 1] END
         FROM unnest(ARRAY[1, 2, 3], $4::timestamptz[]) AS v(n, a) ORDER BY n RETURNING id`,
      [id, JSON.stringify(t.definition), admins[0], at],
    )
    await q(`INSERT INTO bench_template VALUES ($1, $2, $3, $4, $5, $6, $7, $8, $9)`, [id, t.kind, t.name, t.reuse, versions[0].id, versions[1].id, versions[2].id, v2At, v3At])
  }

  await step('equipment',
    `WITH e AS (
       SELECT gen_random_uuid() AS id, p.id AS project_id, g.i, g.i <= p.n_chillers AS chiller, g.i - p.n_chillers AS j, p.ord
         FROM bench_project p, generate_series(1, p.n_equipment) AS g(i))
     INSERT INTO equipment (id, project_id, tag, kind, location, manufacturer, model, serial_number, year_built, refrigerant, design_point)
     SELECT id, project_id,
            CASE WHEN chiller THEN 'CH-' || lpad(i::text, 2, '0') ELSE (ARRAY['CHWP', 'CWP', 'HWP'])[1 + j % 3] || '-' || lpad((1 + j / 3)::text, 2, '0') END,
            CASE WHEN chiller THEN 'centrifugal_chiller' ELSE 'pump' END,
            'Level ' || (1 + i % 4) || ' plant room',
            CASE WHEN chiller THEN ${pick(['Halvard Thermal', 'Brennick Cooling Systems', 'Osterlund Climate'])} ELSE ${pick(['Quarrington Pump Co.', 'Tessaly Fluid Works', 'Harrowfen Hydraulics'])} END,
            CASE WHEN chiller THEN ${pick(['HT-C500', 'HT-C750', 'BCS-1100', 'OC-CX400'])} ELSE ${pick(['QP-8x6-13', 'QP-6x4-11', 'TFW-150', 'HH-E200'])} END,
            upper(substr(md5(random()::text), 1, 2)) || (2019 + ord % 7) || '-' || lpad(floor(random() * 1000000)::text, 6, '0'),
            2019 + ord % 7,
            CASE WHEN chiller THEN 'R-134a' END,
            CASE WHEN chiller THEN '{"capacity": {"value": 500, "unit": "TR"}}'::jsonb ELSE '{"pumpDesignFlow": {"value": 1200, "unit": "gpm"}}'::jsonb END
       FROM e`)
  await q(`CREATE TEMP TABLE bench_pair AS
           SELECT row_number() OVER () AS pair, e.id AS equipment_id, e.project_id, t.id AS template_id, t.name AS template_name,
                  e.tag, e.serial_number, e.manufacturer, e.model, p.start_at, p.span_days, p.techs, p.owner, p.paper,
                  t.v1, t.v2, t.v3, t.v2_at, t.v3_at, random() AS u,
                  p.start_at + random() * p.span_days * interval '1 day' AS first_at
             FROM equipment e JOIN bench_project p ON p.id = e.project_id JOIN bench_template t ON t.kind = e.kind
            WHERE random() < t.reuse`)
  const [{ pairs }] = await q(`SELECT count(*)::int AS pairs FROM bench_pair`)

  // Runs per (equipment, checklist): 1 + floor(K·u²) — most once or twice, a few many times. A run re-tested within a
  // month had failures; the other gaps are seasonal or yearly re-tests. K is chosen so there are ~35 % more candidates than wanted
  // (runs beyond today are dropped), and the wanted number is then sampled at random.
  let K = Math.max(1, 3 * ((1.45 * opts.reports) / pairs - 0.5))
  for (let attempt = 0; ; attempt++) {
    // g0 picks the kind of gap; it refers to s.j so it is drawn per run rather than once per pair.
    await step(`run candidates (${pairs} equipment × checklist pairs, K ${K.toFixed(1)})`,
      `CREATE TEMP TABLE bench_candidate AS
       WITH g AS (
         SELECT pr.*, s.j, CASE WHEN g0 < 0.45 THEN 1 + random() * 29 WHEN g0 < 0.7 THEN 90 + random() * 90 ELSE 330 + random() * 70 END AS gap
           FROM bench_pair pr, generate_series(1, 1 + floor($1 * pr.u * pr.u)::int) AS s(j), LATERAL (SELECT random() + 0 * s.j AS g0) AS r),
       t AS (
         SELECT g.*, first_at + (coalesce(sum(gap) OVER (PARTITION BY pair ORDER BY j ROWS BETWEEN UNBOUNDED PRECEDING AND 1 PRECEDING), 0)) * interval '1 day'
                       + (7 + random() * 10) * interval '1 hour' AS at0,
                lead(gap) OVER (PARTITION BY pair ORDER BY j) AS next_gap
           FROM g)
       SELECT * FROM t WHERE at0 < now() - interval '1 day'`,
      [K])
    const [{ n: candidates }] = await q(`SELECT count(*)::int AS n FROM bench_candidate`)
    if (candidates >= 1.1 * opts.reports) break
    if (attempt === 7) throw new Error(`only ${candidates} run candidates for ${opts.reports} reports; raise --projects`)
    K *= (1.3 * opts.reports) / Math.max(candidates, 1)
    await q(`DROP TABLE bench_candidate`)
  }

  await step('runs chosen',
    `CREATE TEMP TABLE bench_run AS
     SELECT gen_random_uuid() AS id, c.*,
            c.techs[1 + floor(random() * 3)::int] AS technician,
            CASE WHEN c.next_gap < 31 THEN (CASE WHEN random() < 0.85 THEN 1 + floor(random() * random() * 5)::int ELSE 0 END)
                 ELSE (random() < 0.05)::int END AS fails,
            floor(random() ^ 3 * 6)::int AS marginals,
            CASE WHEN random() < 0.1 THEN 1 + floor(random() ^ 2 * 3)::int ELSE 0 END AS open_findings,
            1 + floor(random() * 3)::int AS notes
       FROM (SELECT * FROM bench_candidate ORDER BY random() LIMIT $1) c`,
    [opts.reports])
  await q(`ALTER TABLE bench_run ADD COLUMN resolved int`)
  await q(`UPDATE bench_run SET resolved = CASE WHEN fails > 0 THEN floor(random() * 3)::int ELSE (random() < 0.1)::int END`)
  await q(`CREATE INDEX ON bench_run (id)`)

  await step('runs (submitted)',
    `INSERT INTO run (id, project_id, equipment_id, template_version_id, state, version, started_by, started_at, updated_at)
     SELECT id, project_id, equipment_id, CASE WHEN at0 >= v3_at THEN v3 WHEN at0 >= v2_at THEN v2 ELSE v1 END, 'submitted', 40 + floor(random() * 80)::int,
            technician, at0 - (2 + random() * 6) * interval '1 hour', at0
       FROM bench_run`)
  await step('step notes',
    `INSERT INTO run_step (run_id, step_id, note, version, updated_by, updated_at)
     SELECT r.id, (CASE WHEN r.tag LIKE 'CH-%' THEN ${sqlArray(CHILLER_STEPS)} ELSE ${sqlArray(PUMP_STEPS)} END)[s.k], ${pick(NOTES)}, 1, r.technician, r.at0 - interval '1 hour'
       FROM bench_run r, generate_series(1, r.notes) AS s(k)`)
  await step('findings (open and resolved)',
    `INSERT INTO finding (run_id, step_id, severity, description, status, resolution, resolved_by, resolved_at, created_by, created_at, updated_at)
     SELECT r.id, 'running', ${pick(['minor', 'minor', 'major', 'critical'])}, ${pick(FINDINGS)},
            CASE WHEN s.k <= r.open_findings THEN 'open' ELSE 'resolved' END,
            CASE WHEN s.k > r.open_findings THEN ${pick(RESOLUTIONS)} END,
            CASE WHEN s.k > r.open_findings THEN r.technician END,
            CASE WHEN s.k > r.open_findings THEN r.at0 - interval '30 minutes' END,
            r.technician, r.at0 - interval '2 hours', r.at0 - interval '30 minutes'
       FROM bench_run r, generate_series(1, r.open_findings + r.resolved) AS s(k)`)
  await step('signatures (performer and witness)',
    `INSERT INTO signature (run_id, meaning, signer_id, printed_name, role, signed_at, time_zone, image_data_url, snapshot_sha256)
     SELECT r.id, m.meaning, m.signer, u.display_name, u.role, r.at0 - m.before, 'UTC', 'data:image/png;base64,iVBORw0KGgo=',
            encode(sha256((r.id::text || m.meaning)::bytea), 'hex')
       FROM bench_run r
       CROSS JOIN LATERAL (VALUES ('performed_by', r.technician, interval '20 minutes'), ('accepted_by', r.owner, interval '0 minutes')) AS m(meaning, signer, before)
       JOIN app_user u ON u.id = m.signer`)
  await step('runs accepted', `UPDATE run SET state = 'accepted', updated_at = r.at0 FROM bench_run r WHERE run.id = r.id`)
  await step('reports (ready, archive columns, search vector)',
    `WITH notes AS (SELECT run_id, string_agg(note, ' ') AS text FROM run_step GROUP BY run_id),
          findings AS (SELECT run_id, string_agg(description || ' ' || coalesce(resolution, ''), ' ') AS text FROM finding GROUP BY run_id),
          numbered AS (
            SELECT r.*, 'SP-' || extract(year FROM r.at0 + interval '4 minutes') || '-' || lpad((row_number() OVER (ORDER BY r.at0))::text, 6, '0') AS report_number,
                   coalesce(n.text, '') AS notes_text, coalesce(f.text, '') AS findings_text
              FROM bench_run r LEFT JOIN notes n ON n.run_id = r.id LEFT JOIN findings f ON f.run_id = r.id)
     INSERT INTO report (run_id, report_number, status, paper, attempts, storage_key, sha256, content_sha256, size_bytes, seal_info, created_at, ready_at,
                         project_id, equipment_id, template_id, technician_id, accepted_at, fail_count, marginal_count, open_finding_count, search)
     SELECT id, report_number, 'ready', paper, 1, 'reports/' || encode(sha256(id::text::bytea), 'hex'), encode(sha256(id::text::bytea), 'hex'),
            encode(sha256(report_number::bytea), 'hex'), 300000 + floor(random() * 900000)::int, '{"subject": "Orlmere Commissioning Services"}'::jsonb,
            at0 + interval '1 minute', at0 + interval '4 minutes',
            project_id, equipment_id, template_id, technician, at0, fails, marginals, open_findings,
            setweight(to_tsvector('simple', tag || ' ' || replace(tag, '-', '') || ' ' || serial_number || ' ' || report_number), 'A')
              || setweight(to_tsvector('english', manufacturer || ' ' || model || ' ' || template_name), 'B')
              || to_tsvector('english', notes_text || ' ' || findings_text)
       FROM numbered ORDER BY at0`)
  await q(`SELECT setval('report_number_seq', (SELECT count(*) FROM report))`)

  const counts: Record<string, number> = {}
  for (const table of ['project', 'project_member', 'app_user', 'equipment', 'checklist_template', 'template_version', 'run', 'run_step', 'finding', 'signature', 'report']) {
    const [{ n }] = await q(`SELECT count(*)::int AS n FROM ${table}`)
    counts[table] = n
  }
  for (const t of ['bench_candidate', 'bench_run', 'bench_pair', 'bench_template', 'bench_project']) await q(`DROP TABLE ${t}`)
  return { organizationId, adminId: admins[0], contractorId: contractors[0], technicianIds: technicians, counts }
}
