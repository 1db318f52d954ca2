import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import { createPinia, setActivePinia } from 'pinia'
import { emptyProgress, runSupersedes, type CheckIndex, type IssuedChecks } from '@shared/record'
import type { RunDetail, RunReview } from '@shared/types/run'
import type { SignatureMeaning } from '@shared/types/report'

// Element Plus styles are plain CSS that the test environment does not load.
vi.mock('element-plus/es/components/base/style/css', () => ({}))
vi.mock('element-plus/es/components/dialog/style/css', () => ({}))
vi.mock('element-plus/es/components/form/style/css', () => ({}))
vi.mock('element-plus/es/components/form-item/style/css', () => ({}))
vi.mock('element-plus/es/components/input/style/css', () => ({}))
vi.mock('element-plus/es/components/alert/style/css', () => ({}))
vi.mock('element-plus/es/components/button/style/css', () => ({}))
vi.mock('element-plus/es/components/checkbox/style/css', () => ({}))
vi.mock('element-plus/es/components/checkbox-group/style/css', () => ({}))
// jsdom draws nothing on a canvas: the pad library is replaced by one that draws nothing either (as in BaseSignaturePad.test.ts).
vi.mock('signature_pad', () => ({
  default: class {
    addEventListener() {}
    isEmpty() {
      return true
    }
    toData() {
      return []
    }
    fromData() {}
    clear() {}
    on() {}
    off() {}
  },
}))

const { default: RunSignDialog } = await import('@/components/RunSignDialog.vue')

// Supersession by check (docs/REFERENCES.md §Record keeping: supersession by check), as the signers see it.
const fields = (prefix: string, n: number) => Array.from({ length: n }, (_, i) => `${prefix}${i + 1}`)
const RUNNING = fields('run', 8)
const REST = fields('rest', 87)
const BASELINE = 'SP-2024-000007'
const baseline: IssuedChecks = { reportNumber: BASELINE, acceptedAt: '2024-10-01T15:00:00Z', index: { checks: 95, performed: [...RUNNING, ...REST], carried: {}, byOthers: [] } }
const carryRest = (from: string): Record<string, string> => Object.fromEntries(REST.map((f) => [f, from]))

const run = { id: 'run-2', equipmentTag: 'CH-7', projectCode: 'HSP-1', projectName: 'Test hospital plant', templateName: 'Chiller start-up', templateVersionNumber: 1, signatures: [] } as unknown as RunDetail
function review(index: CheckIndex, earlier: IssuedChecks[]): RunReview {
  return {
    counts: { ...emptyProgress(), checks: index.checks },
    problems: [],
    missingRequired: [],
    openFindings: [],
    exceptions: [],
    blockingFindings: [],
    byOthers: [],
    canSign: true,
    blockers: [],
    snapshotSha256: 'ab'.repeat(32),
    supersession: runSupersedes(index, earlier, 'preview'),
  }
}

let wrapper: VueWrapper
async function open(r: RunReview, meaning: SignatureMeaning) {
  wrapper = mount(RunSignDialog, { props: { modelValue: true, run, review: r, meaning }, attachTo: document.body })
  await flushPromises()
}
const box = () => document.querySelector('[data-test=sign-supersedes]') as HTMLElement | null

beforeEach(() => setActivePinia(createPinia()))
afterEach(() => {
  wrapper?.unmount()
  document.body.innerHTML = ''
})

describe('RunSignDialog: what accepting the run supersedes', () => {
  it('when a re-test performs 8 of 95 checks, then the performer is told plainly before signing what it supersedes and what stays current', async () => {
    await open(review({ checks: 95, performed: RUNNING, carried: carryRest(BASELINE), byOthers: [] }, [baseline]), 'performed_by')
    expect(box()?.dataset.few).toBe('true')
    expect([...box()!.querySelectorAll('li')].map((li) => li.textContent)).toEqual([
      'This run performs only 8 of its 95 checks; the other 87 are carried over or set aside.',
      `Accepting this run supersedes 8 of 95 checks of ${BASELINE}; the other 87 stay current there.`,
      `87 checks carried over from ${BASELINE}.`,
    ])
    expect(box()!.querySelector('h3')?.textContent).toBe('This run re-tests little: what it supersedes')
  })

  it('when the owner’s representative accepts a full re-test, then the dialog says it supersedes the earlier report as a whole', async () => {
    await open(review({ checks: 95, performed: [...RUNNING, ...REST], carried: {}, byOthers: [] }, [baseline]), 'accepted_by')
    expect(box()?.dataset.few).toBe('false')
    expect(box()!.textContent).toContain(`Accepting this run supersedes all 95 checks of ${BASELINE}: none stays current there.`)
    expect(box()!.querySelector('h3')?.textContent).toBe('What accepting this run supersedes')
  })

  it('when the run is the first of its equipment and checklist and carries nothing over, then nothing is said about supersession', async () => {
    await open(review({ checks: 95, performed: [...RUNNING, ...REST], carried: {}, byOthers: [] }, []), 'performed_by')
    expect(document.querySelector('[data-test=sign-what]')).not.toBeNull()
    expect(box()).toBeNull()
  })
})
