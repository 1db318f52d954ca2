import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createPinia, setActivePinia } from 'pinia'
import { createMemoryHistory, createRouter, type Router } from 'vue-router'
import type { ArchiveFacets, ArchiveItem, ArchivePage } from '@shared/types/archive'
import { ApiError } from '@/api/http'
import { EMPTY_FILTERS, filterErrors, filtersFromQuery, isRealDay, queryFromFilters } from '@/composables/useArchiveFilters'

// Element Plus styles are plain CSS that the test environment does not load.
vi.mock('element-plus/es/components/base/style/css', () => ({}))
vi.mock('element-plus/es/components/alert/style/css', () => ({}))
vi.mock('element-plus/es/components/skeleton/style/css', () => ({}))
vi.mock('element-plus/es/components/button/style/css', () => ({}))
vi.mock('element-plus/es/components/checkbox/style/css', () => ({}))
vi.mock('element-plus/es/components/table/style/css', () => ({}))
vi.mock('element-plus/es/components/table-column/style/css', () => ({}))
vi.mock('element-plus/es/components/form/style/css', () => ({}))
vi.mock('element-plus/es/components/form-item/style/css', () => ({}))
vi.mock('element-plus/es/components/input/style/css', () => ({}))
vi.mock('element-plus/es/components/select/style/css', () => ({}))
vi.mock('element-plus/es/components/option/style/css', () => ({}))
vi.mock('element-plus/es/components/date-picker/style/css', () => ({}))
vi.mock('element-plus/es/components/progress/style/css', () => ({}))
vi.mock('element-plus/es/components/empty/style/css', () => ({}))

const api = vi.hoisted(() => ({ search: vi.fn(), facets: vi.fn(), exportPackage: vi.fn(), list: vi.fn() }))
vi.mock('@/api/archive', async (importOriginal) => {
  const real = await importOriginal<typeof import('@/api/archive')>()
  return {
    ...real,
    archiveApi: { ...real.archiveApi, search: api.search, facets: api.facets, exportPackage: api.exportPackage },
    closeoutApi: { ...real.closeoutApi, list: api.list },
  }
})

const { default: ArchiveView } = await import('@/views/ArchiveView.vue')

const HOSPITAL = '11111111-1111-4111-8111-111111111111'
const COLLEGE = '22222222-2222-4222-8222-222222222222'
const CH1 = '33333333-3333-4333-8333-333333333331'
const CH2 = '33333333-3333-4333-8333-333333333332'
const B41 = '33333333-3333-4333-8333-333333333341'
const STARTUP = '44444444-4444-4444-8444-444444444444'
const RAFE = '55555555-5555-4555-8555-555555555551'
const GONE = '55555555-5555-4555-8555-555555555552'

const facets: ArchiveFacets = {
  projects: [
    { id: HOSPITAL, code: 'HSP-1', name: 'Test hospital plant', closed: false, reportCount: 3 },
    { id: COLLEGE, code: 'COL-4', name: 'Test college plant', closed: true, reportCount: 1 },
  ],
  equipment: [
    { id: CH1, projectId: HOSPITAL, tag: 'CH-1', kind: 'centrifugal_chiller', reportCount: 1 },
    { id: CH2, projectId: HOSPITAL, tag: 'CH-2', kind: 'centrifugal_chiller', reportCount: 2 },
    { id: B41, projectId: COLLEGE, tag: 'CH-B4-1', kind: 'centrifugal_chiller', reportCount: 1 },
  ],
  templates: [{ id: STARTUP, name: 'Chiller start-up', reportCount: 4 }],
  technicians: [
    { id: RAFE, name: 'Test Technician', active: true, reportCount: 3 },
    { id: GONE, name: 'Former Technician', active: false, reportCount: 1 },
  ],
}

const item = (n: number, over: Partial<ArchiveItem> = {}): ArchiveItem => ({
  reportNumber: `SP-2026-00000${n}`,
  runId: `run-${n}`,
  projectId: HOSPITAL,
  projectCode: 'HSP-1',
  projectName: 'Test hospital plant',
  projectClosed: false,
  projectTimeZone: 'America/Chicago',
  equipmentId: CH2,
  equipmentTag: 'CH-2',
  equipmentKind: 'centrifugal_chiller',
  serialNumber: 'TS-0002',
  templateId: STARTUP,
  templateName: 'Chiller start-up',
  templateVersion: 1,
  technicianId: RAFE,
  technicianName: 'Test Technician',
  acceptedAt: '2026-11-20T15:30:00.000Z',
  failCount: 0,
  marginalCount: 0,
  openFindingCount: 0,
  sha256: 'ab'.repeat(32),
  sizeBytes: 495_000,
  downloadUrl: `/api/runs/run-${n}/report.pdf`,
  supersededBy: null,
  supersession: { state: 'current', words: 'Current', by: [], performed: 95, retested: 0, retest: null },
  ...over,
})
const page = (items: ArchiveItem[], total = items.length, nextCursor: string | null = null): ArchivePage => ({ items, total, nextCursor })

function makeRouter(): Router {
  return createRouter({
    history: createMemoryHistory(),
    routes: [
      { path: '/archive', name: 'archive', component: ArchiveView },
      { path: '/projects/:projectId', name: 'project', component: { template: '<div />' } },
    ],
  })
}

async function mountAt(url: string) {
  const router = makeRouter()
  await router.push(url)
  await router.isReady()
  const wrapper = mount(ArchiveView, { global: { plugins: [router] }, attachTo: document.body })
  await flushPromises()
  return { wrapper, router }
}

const lastSearch = () => api.search.mock.calls.at(-1)![0]

beforeEach(() => {
  setActivePinia(createPinia())
  window.matchMedia ??= ((query: string) => ({ matches: false, media: query, addEventListener() {}, removeEventListener() {} })) as unknown as typeof window.matchMedia
  Element.prototype.scrollIntoView ??= () => undefined
  api.search.mockReset().mockResolvedValue(page([item(3), item(2, { failCount: 1, openFindingCount: 1, supersededBy: 'SP-2026-000003', supersession: { state: 'superseded', words: 'Superseded: all 95 checks re-tested in SP-2026-000003', by: [{ reportNumber: 'SP-2026-000003', checks: 95 }], performed: 95, retested: 95, retest: null } }), item(1)], 3))
  api.facets.mockReset().mockResolvedValue(facets)
  api.list.mockReset().mockResolvedValue([])
})
afterEach(() => {
  vi.useRealTimers()
  document.body.innerHTML = ''
})

describe('archive filters and the URL query', () => {
  it('when filters are written to the URL and read back, then they are the same, and empty or default ones are left out', () => {
    const filters = { ...EMPTY_FILTERS, projectId: HOSPITAL, equipmentId: CH2, from: '2026-11-01', to: '2026-11-30', hasFails: true, hasOpenFindings: false, q: ' oil pressure ', sort: 'oldest' as const }
    const query = queryFromFilters(filters)
    expect(query).toEqual({ project: HOSPITAL, equipment: CH2, from: '2026-11-01', to: '2026-11-30', fails: 'true', openFindings: 'false', q: 'oil pressure', sort: 'oldest' })
    expect(filtersFromQuery(query as Record<string, string>)).toEqual({ ...filters, q: 'oil pressure' })
    expect(queryFromFilters(EMPTY_FILTERS)).toEqual({})
    expect(filtersFromQuery({ fails: 'maybe', sort: 'sideways' })).toMatchObject({ hasFails: null, sort: 'newest' })
  })

  it('when the server names a bad parameter, then the message is keyed by the filter and says its name in words', () => {
    expect(filterErrors({ 'query.from': 'from is not a real date', 'query.projectId': 'projectId must be a UUID' })).toEqual({
      from: 'Accepted from is not a real date',
      projectId: 'Project must be a UUID',
    })
    expect(isRealDay('2026-02-28')).toBe(true)
    expect(isRealDay('2026-02-30')).toBe(false)
    expect(isRealDay('28/02/2026')).toBe(false)
  })

  it('when the page opens on a bookmarked search, then the archive is asked for exactly those filters and shows the count', async () => {
    const { wrapper } = await mountAt(`/archive?project=${HOSPITAL}&equipment=${CH2}&fails=true&q=oil&sort=oldest`)
    expect(lastSearch()).toMatchObject({ projectId: HOSPITAL, equipmentId: CH2, hasFails: true, q: 'oil', sort: 'oldest', limit: 25 })
    expect(lastSearch().hasOpenFindings).toBeUndefined()
    expect(wrapper.find('[data-test=archive-total]').text()).toBe('3 reports match')
    expect((wrapper.find('input[data-test=archive-search]').element as HTMLInputElement).value).toBe('oil')
    expect(wrapper.findAll('[data-test=archive-item]')).toHaveLength(3)
    // Accepted 15:30 UTC is shown as the site's time, zone named.
    expect(wrapper.text()).toContain('Nov 20, 2026, 9:30 AM CST')
    // The chosen project's closeout documents are listed with its reports.
    expect(api.list).toHaveBeenCalledWith(HOSPITAL)
    expect(wrapper.find('[data-test=archive-closeout]').exists()).toBe(true)
    wrapper.unmount()
  })

  it('when a filter is chosen, then it goes into the URL and the first page is asked again; changing the project drops equipment of another project', async () => {
    const { wrapper, router } = await mountAt(`/archive?equipment=${B41}`)
    const bar = wrapper.findComponent({ name: 'ArchiveFilterBar' })
    bar.vm.$emit('change', { hasOpenFindings: true })
    await flushPromises()
    expect(router.currentRoute.value.query).toEqual({ equipment: B41, openFindings: 'true' })
    expect(lastSearch()).toMatchObject({ equipmentId: B41, hasOpenFindings: true })
    expect(lastSearch().cursor).toBeUndefined()

    // Choosing the hospital through the project menu: CH-B4-1 belongs to the college, so it is dropped.
    const menu = wrapper.findComponent('[data-test=archive-project]') as unknown as { vm: { $emit(e: string, v: string): void } }
    menu.vm.$emit('update:modelValue', HOSPITAL)
    await flushPromises()
    expect(router.currentRoute.value.query).toEqual({ project: HOSPITAL, openFindings: 'true' })
    expect(lastSearch().equipmentId).toBeUndefined()
    wrapper.unmount()
  })

  it('when the search box is typed in, then the URL and the search change only after a pause in typing', async () => {
    vi.useFakeTimers()
    const { wrapper, router } = await mountAt('/archive')
    const calls = api.search.mock.calls.length
    const input = wrapper.find('input[data-test=archive-search]')
    await input.setValue('CH')
    await vi.advanceTimersByTimeAsync(200)
    await input.setValue('CH-2')
    await vi.advanceTimersByTimeAsync(399)
    expect(router.currentRoute.value.query.q).toBeUndefined()
    expect(api.search.mock.calls.length).toBe(calls)
    await vi.advanceTimersByTimeAsync(1)
    await flushPromises()
    expect(router.currentRoute.value.query).toEqual({ q: 'CH-2' })
    expect(api.search.mock.calls.length).toBe(calls + 1)
    expect(lastSearch().q).toBe('CH-2')
    wrapper.unmount()
  })

  it('when the URL changes (back, a bookmark), then the filters follow it', async () => {
    const { wrapper, router } = await mountAt('/archive?q=serial')
    await router.replace({ query: { q: 'findings', technician: GONE } })
    await flushPromises()
    expect(lastSearch()).toMatchObject({ q: 'findings', technicianId: GONE })
    expect((wrapper.find('input[data-test=archive-search]').element as HTMLInputElement).value).toBe('findings')
    wrapper.unmount()
  })

  it('when the server refuses a bookmarked date, then the refusal names the filter and it is marked on that field', async () => {
    api.search.mockRejectedValue(new ApiError(400, 'invalid_input', 'from is not a real date', { 'query.from': 'from is not a real date' }))
    const { wrapper } = await mountAt('/archive?from=2026-02-30')
    const alert = wrapper.find('[data-test=archive-error]')
    expect(alert.text()).toContain('Accepted from is not a real date')
    const fromItem = wrapper.findAll('.el-form-item').find((f) => f.text().startsWith('Accepted from'))!
    expect(fromItem.classes()).toContain('is-error')
    expect(fromItem.find('input').attributes('placeholder')).toBe('“2026-02-30” is not a date')
    wrapper.unmount()
  })

  it('when there are more reports, then Load more asks with the cursor and adds them below', async () => {
    api.search.mockResolvedValueOnce(page([item(3), item(2)], 3, 'next-1')).mockResolvedValueOnce(page([item(1)], 3, null))
    const { wrapper } = await mountAt('/archive')
    expect(wrapper.findAll('[data-test=archive-item]')).toHaveLength(2)
    await wrapper.find('[data-test=archive-more-reports]').trigger('click')
    await flushPromises()
    expect(lastSearch()).toMatchObject({ cursor: 'next-1', limit: 25 })
    expect(wrapper.findAll('[data-test=archive-item]').map((el) => el.attributes('data-report'))).toEqual(['SP-2026-000003', 'SP-2026-000002', 'SP-2026-000001'])
    expect(wrapper.find('[data-test=archive-more-reports]').exists()).toBe(false)
    wrapper.unmount()
  })

  it('when a superseded report’s tag is followed and the successor is shown, then the URL points at it and nothing else is asked', async () => {
    const { wrapper, router } = await mountAt('/archive')
    const calls = api.search.mock.calls.length
    expect(wrapper.find('[data-test="superseded-SP-2026-000002"]').text()).toContain('Superseded by SP-2026-000003')
    await wrapper.find('[data-test="superseded-SP-2026-000002"]').trigger('click')
    await flushPromises()
    expect(router.currentRoute.value.query).toEqual({ report: 'SP-2026-000003' })
    expect(api.search.mock.calls.length).toBe(calls)
    wrapper.unmount()
  })

  it('when a baseline had only some checks re-tested, then it says partly superseded with the count, and the re-test says what it carries over', async () => {
    const partly = { state: 'partly' as const, words: 'Partly superseded: 8 of 95 checks re-tested in SP-2026-000003', by: [{ reportNumber: 'SP-2026-000003', checks: 8 }], performed: 95, retested: 8, retest: null }
    const retest = { state: 'current' as const, words: 'Current', by: [], performed: 8, retested: 0, retest: 'Re-test: performed 8 of its 95 checks. 87 checks carried over from SP-2026-000002.' }
    api.search.mockReset().mockResolvedValue(page([item(3, { supersession: retest }), item(2, { supersession: partly })], 2))
    const { wrapper, router } = await mountAt('/archive')
    const button = wrapper.find('[data-test="superseded-SP-2026-000002"]')
    expect(button.text()).toBe('Partly superseded: 8 of 95 checks re-tested in SP-2026-000003 →')
    expect(button.text()).not.toContain('Superseded by')
    expect(wrapper.find('[data-test="superseded-SP-2026-000003"]').exists()).toBe(false)
    expect(wrapper.find('[data-test="retest-SP-2026-000003"]').text()).toBe(retest.retest)
    await button.trigger('click')
    await flushPromises()
    expect(router.currentRoute.value.query).toEqual({ report: 'SP-2026-000003' })
    wrapper.unmount()
  })

  it('when nothing matches, then the empty state explains and offers to clear the filters', async () => {
    api.search.mockResolvedValue(page([], 0))
    const { wrapper, router } = await mountAt(`/archive?q=nothing&fails=true`)
    expect(wrapper.find('[data-test=archive-empty]').text()).toMatch(/No report matches these filters/)
    await wrapper.find('[data-test=archive-empty-clear]').trigger('click')
    await flushPromises()
    expect(router.currentRoute.value.query).toEqual({})
    wrapper.unmount()
  })
})
