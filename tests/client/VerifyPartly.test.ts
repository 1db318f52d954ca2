import { describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import { createPinia, setActivePinia } from 'pinia'
import { createMemoryHistory, createRouter } from 'vue-router'
import { reportSupersession, type IssuedChecks } from '@shared/record'
import type { VerifyAnswer } from '@shared/types/verify'

// Element Plus styles are plain CSS that the test environment does not load.
vi.mock('element-plus/es/components/base/style/css', () => ({}))
vi.mock('element-plus/es/components/alert/style/css', () => ({}))
vi.mock('element-plus/es/components/skeleton/style/css', () => ({}))
vi.mock('element-plus/es/components/button/style/css', () => ({}))
vi.mock('element-plus/es/components/input/style/css', () => ({}))

const api = vi.hoisted(() => ({ byNumber: vi.fn() }))
vi.mock('@/api/verify', async (importOriginal) => {
  const real = await importOriginal<typeof import('@/api/verify')>()
  return { ...real, verifyApi: { ...real.verifyApi, byNumber: api.byNumber } }
})

const { default: VerifyView } = await import('@/views/VerifyView.vue')

// Supersession by check on the public Verify page (docs/REFERENCES.md §Record keeping: supersession by check).
const ids = (prefix: string, n: number) => Array.from({ length: n }, (_, i) => `${prefix}${i + 1}`)
const BASELINE = 'SP-2024-000007'
const RETEST = 'SP-2025-000031'
const lineage: IssuedChecks[] = [
  { reportNumber: BASELINE, acceptedAt: '2024-10-01T15:00:00Z', index: { checks: 95, performed: [...ids('run', 8), ...ids('rest', 87)], carried: {}, byOthers: [] } },
  { reportNumber: RETEST, acceptedAt: '2025-03-02T15:00:00Z', index: { checks: 95, performed: ids('run', 8), carried: Object.fromEntries(ids('rest', 87).map((f) => [f, BASELINE])), byOthers: [] } },
]
const facts = { reportNumber: BASELINE, equipmentTag: 'CH-7', projectName: 'Test hospital plant', acceptedAt: '2024-10-01T15:00:00.000Z', acceptedAtLocal: '2024-10-01 10:00 CDT', verdict: 'pass' as const }

describe('VerifyView', () => {
  it('when a baseline had 8 of its 95 checks re-tested, then it reads partly superseded, links the re-test and says what it still holds', async () => {
    setActivePinia(createPinia())
    const supersession = reportSupersession(lineage[0], lineage)
    const answer: VerifyAnswer = {
      outcome: 'genuine_partly_superseded',
      headline: `${BASELINE} is an issued report; partly superseded: 8 of 95 checks re-tested in ${RETEST}`,
      reasons: [`Report ${BASELINE} is in the archive.`],
      report: facts,
      supersededBy: null,
      supersession,
      sha256: null,
      fileChecked: false,
    }
    api.byNumber.mockResolvedValue(answer)
    const router = createRouter({ history: createMemoryHistory(), routes: [{ path: '/verify/:reportNumber', name: 'verify-number', component: VerifyView, props: true }, { path: '/sign-in', name: 'sign-in', component: { template: '<div />' } }] })
    await router.push(`/verify/${BASELINE}`)
    await router.isReady()
    const wrapper = mount({ template: '<RouterView />' }, { global: { plugins: [router] } })
    await flushPromises()

    expect(api.byNumber).toHaveBeenCalledWith(BASELINE)
    const result = wrapper.find('[data-test=verify-answer]')
    expect(result.attributes('data-outcome')).toBe('genuine_partly_superseded')
    // A number looked up without a file: issued, not proven unaltered.
    expect(result.text()).toContain('Issued; partly superseded')
    expect(result.text()).not.toContain('Issued, but superseded')
    const retested = wrapper.find('[data-test=verify-retested-in]')
    expect(retested.text().replace(/\s+/g, ' ')).toBe(`Re-tested in ${RETEST} (8 checks); this report stays the record for its other 87 checks.`)
    expect(retested.find('a').attributes('href')).toBe(`/verify/${RETEST}`)
    expect(wrapper.text()).not.toContain('The current report is')
    wrapper.unmount()
  })
})
