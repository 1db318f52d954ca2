import { computed } from 'vue'
import { useRoute, useRouter, type LocationQuery, type LocationQueryRaw } from 'vue-router'
import type { ArchiveSearch } from '@/api/archive'

/** The archive's filters as the page holds them; the URL query is their one source, so a search can be bookmarked. */
export interface ArchiveFilters {
  projectId: string
  equipmentId: string
  templateId: string
  technicianId: string
  from: string
  to: string
  hasFails: boolean | null
  hasOpenFindings: boolean | null
  q: string
  sort: 'newest' | 'oldest'
}

export const EMPTY_FILTERS: ArchiveFilters = {
  projectId: '',
  equipmentId: '',
  templateId: '',
  technicianId: '',
  from: '',
  to: '',
  hasFails: null,
  hasOpenFindings: null,
  q: '',
  sort: 'newest',
}

const first = (v: LocationQuery[string] | undefined): string => (Array.isArray(v) ? (v[0] ?? '') : (v ?? '')).trim()
const yesNo = (v: string): boolean | null => (v === 'true' ? true : v === 'false' ? false : null)

/**
 * Reads the filters from a URL query. Values are taken as written (a mistyped date in a bookmark reaches the server,
 * which answers naming the parameter); only `sort` and the yes/no filters fall back to their defaults.
 */
export function filtersFromQuery(query: LocationQuery): ArchiveFilters {
  const sort = first(query.sort)
  return {
    projectId: first(query.project),
    equipmentId: first(query.equipment),
    templateId: first(query.checklist),
    technicianId: first(query.technician),
    from: first(query.from),
    to: first(query.to),
    hasFails: yesNo(first(query.fails)),
    hasOpenFindings: yesNo(first(query.openFindings)),
    q: first(query.q),
    sort: sort === 'oldest' ? 'oldest' : 'newest',
  }
}

/** Writes the filters as a URL query, leaving out what is empty or default so links stay short. */
export function queryFromFilters(filters: ArchiveFilters): LocationQueryRaw {
  const query: LocationQueryRaw = {}
  if (filters.projectId) query.project = filters.projectId
  if (filters.equipmentId) query.equipment = filters.equipmentId
  if (filters.templateId) query.checklist = filters.templateId
  if (filters.technicianId) query.technician = filters.technicianId
  if (filters.from) query.from = filters.from
  if (filters.to) query.to = filters.to
  if (filters.hasFails !== null) query.fails = String(filters.hasFails)
  if (filters.hasOpenFindings !== null) query.openFindings = String(filters.hasOpenFindings)
  if (filters.q.trim()) query.q = filters.q.trim()
  if (filters.sort !== 'newest') query.sort = filters.sort
  return query
}

/** The API request for these filters. */
export function searchFromFilters(filters: ArchiveFilters): ArchiveSearch {
  return {
    projectId: filters.projectId || undefined,
    equipmentId: filters.equipmentId || undefined,
    templateId: filters.templateId || undefined,
    technicianId: filters.technicianId || undefined,
    from: filters.from || undefined,
    to: filters.to || undefined,
    hasFails: filters.hasFails ?? undefined,
    hasOpenFindings: filters.hasOpenFindings ?? undefined,
    q: filters.q.trim() || undefined,
    sort: filters.sort,
  }
}

/** The URL query's words for the API's parameters, so a 400 naming `query.from` lands on the From field. */
export const FILTER_LABELS: Record<string, string> = {
  projectId: 'Project',
  equipmentId: 'Equipment',
  templateId: 'Checklist',
  technicianId: 'Technician',
  from: 'Accepted from',
  to: 'Accepted to',
  hasFails: 'Fails',
  hasOpenFindings: 'Open findings',
  q: 'Search',
  sort: 'Sort',
  limit: 'Page size',
  cursor: 'Load more',
}

/** `{ 'query.from': 'from is not a real date' }` → `{ from: 'Accepted from is not a real date' }`: the filter's own name in words. */
export function filterErrors(fields: Record<string, string>): Record<string, string> {
  const out: Record<string, string> = {}
  for (const [path, message] of Object.entries(fields)) {
    const key = path.replace(/^query\./, '')
    const label = FILTER_LABELS[key]
    out[key] = label && message.startsWith(`${key} `) ? `${label}${message.slice(key.length)}` : message
  }
  return out
}

/** A date written YYYY-MM-DD that is a real day of the calendar (2026-02-30 is not). */
export function isRealDay(value: string): boolean {
  if (!/^\d{4}-\d{2}-\d{2}$/.test(value)) return false
  const d = new Date(`${value}T00:00:00Z`)
  return !Number.isNaN(d.getTime()) && d.toISOString().startsWith(value)
}

/** Filters bound to the current route's query; `set` changes some and replaces the URL (no history entry per keystroke). */
export function useArchiveFilters() {
  const route = useRoute()
  const router = useRouter()
  const filters = computed(() => filtersFromQuery(route.query))
  async function set(change: Partial<ArchiveFilters>, extra: LocationQueryRaw = {}) {
    const next = { ...filters.value, ...change }
    await router.replace({ query: { ...queryFromFilters(next), ...extra } })
  }
  async function clear() {
    await router.replace({ query: {} })
  }
  return { filters, set, clear }
}
