import { afterEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount, type VueWrapper } from '@vue/test-utils'
import type { AffectedRun } from '@shared/types/design-change'
import { ApiError } from '@/api/http'
import { editConflictOf, outcomeText, signedRunLine, signedRunsOf } from '@/api/edit-conflicts'

// Element Plus styles are plain CSS that the test environment does not load.
vi.mock('element-plus/es/components/base/style/css', () => ({}))
vi.mock('element-plus/es/components/button/style/css', () => ({}))
vi.mock('element-plus/es/components/dialog/style/css', () => ({}))

const { default: BaseEditConflict } = await import('@/components/BaseEditConflict.vue')
const { default: BaseSignedRunsDialog } = await import('@/components/BaseSignedRunsDialog.vue')

const run: AffectedRun = {
  runId: '22222222-2222-4222-8222-222222222222',
  state: 'submitted',
  equipmentTag: 'CH-2',
  checklist: 'Centrifugal chiller start-up v3',
  performer: 'Ada Tech',
  signedAt: '2026-12-01T16:42:00.000Z',
}

let wrapper: VueWrapper | null = null
afterEach(() => {
  wrapper?.unmount()
  wrapper = null
  document.body.innerHTML = ''
})

describe('edit conflicts in the API client', () => {
  it('when the server answers edit_conflict, then the message and the current record are read from the error', () => {
    const current = { id: 'p1', name: 'Central plant, east', version: 2 }
    const err = new ApiError(409, 'edit_conflict', 'Sam Example changed the name at 14:02 UTC; keep theirs or use yours', { name: 'Changed by Sam Example at 14:02 UTC' }, { current })
    expect(editConflictOf(err)).toEqual({ message: 'Sam Example changed the name at 14:02 UTC; keep theirs or use yours', current })
    expect(signedRunsOf(err)).toBeNull()
    expect(editConflictOf(new ApiError(409, 'code_taken', 'Project code TP-1 is already used'))).toBeNull()
    expect(editConflictOf(new Error('network'))).toBeNull()
  })

  it('when the server answers affects_signed_runs, then each run is named with its tag, checklist, performer and signing time', () => {
    const err = new ApiError(409, 'affects_signed_runs', 'Changing the design point of CH-2 voids …', { confirmVoid: 'Confirm to void 1 performer signature' }, { runs: [run] })
    expect(signedRunsOf(err)).toEqual([run])
    expect(signedRunLine(run)).toMatch(/^CH-2 · Centrifugal chiller start-up v3 · signed by Ada Tech on Dec 1, 2026, \d{1,2}:42 (AM|PM)$/)
  })

  it('when an edit reached runs, then the success message says how many were re-judged and returned', () => {
    expect(outcomeText({ rejudged: [], voided: [] })).toBe('')
    expect(outcomeText({ rejudged: [{ ...run, state: 'in_progress' }], voided: [{ ...run, state: 'returned' }, { ...run, runId: 'x', state: 'returned' }] })).toBe(
      '1 run in progress re-judged; 2 signatures voided and the runs returned to the technician',
    )
  })
})

describe('BaseEditConflict', () => {
  it('when shown, then it says who changed what, that nothing of mine was lost, and offers keep theirs / use mine', async () => {
    wrapper = mount(BaseEditConflict, { props: { message: 'Sam Example changed the description at 14:02 UTC; keep theirs or use yours' } })
    expect(wrapper.text()).toContain('Sam Example changed the description at 14:02 UTC; keep theirs or use yours.')
    expect(wrapper.text()).toContain('Your changes are kept here and have not been saved.')
    await wrapper.get('[data-test=keep-theirs]').trigger('click')
    await wrapper.get('[data-test=use-mine]').trigger('click')
    expect(wrapper.emitted('keepTheirs')).toHaveLength(1)
    expect(wrapper.emitted('useMine')).toHaveLength(1)
  })
})

describe('BaseSignedRunsDialog', () => {
  it('when an edit would void signatures, then the dialog names each run and confirming or keeping is the admin’s choice', async () => {
    wrapper = mount(BaseSignedRunsDialog, { props: { runs: [run], subject: 'the values of CH-2' }, attachTo: document.body })
    await flushPromises()
    const box = document.querySelector('[data-test=signed-runs]') as HTMLElement
    expect(box.textContent).toContain("Changing the values of CH-2 voids the performer's signature on this submitted run")
    expect(document.querySelector(`[data-test=signed-run-${run.runId}]`)?.textContent).toContain('CH-2 · Centrifugal chiller start-up v3 · signed by Ada Tech')
    ;(document.querySelector('[data-test=confirm-void]') as HTMLElement).click()
    ;(document.querySelector('[data-test=keep-signatures]') as HTMLElement).click()
    expect(wrapper.emitted('confirm')).toHaveLength(1)
    expect(wrapper.emitted('cancel')).toHaveLength(1)
  })

  it('when no run is affected, then no dialog is open', async () => {
    wrapper = mount(BaseSignedRunsDialog, { props: { runs: null, subject: 'the values of CH-2' }, attachTo: document.body })
    await flushPromises()
    expect(document.querySelector('[data-test=signed-runs]')).toBeNull()
  })
})
