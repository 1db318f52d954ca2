import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { flushPromises, mount } from '@vue/test-utils'
import type { RunReport } from '@/api/signoff'

// Element Plus styles are plain CSS that the test environment does not load.
vi.mock('element-plus/es/components/base/style/css', () => ({}))
vi.mock('element-plus/es/components/alert/style/css', () => ({}))
vi.mock('element-plus/es/components/skeleton/style/css', () => ({}))
vi.mock('element-plus/es/components/progress/style/css', () => ({}))
vi.mock('element-plus/es/components/button/style/css', () => ({}))

const api = vi.hoisted(() => ({ report: vi.fn(), retryReport: vi.fn() }))
vi.mock('@/api/signoff', async (importOriginal) => {
  const real = await importOriginal<typeof import('@/api/signoff')>()
  return { ...real, signoffApi: { ...real.signoffApi, report: api.report, retryReport: api.retryReport } }
})

const { default: RunSignReport } = await import('@/components/RunSignReport.vue')

const base: RunReport = {
  id: 'r1', runId: 'run-1', reportNumber: 'SP-2026-0007', status: 'pending', paper: 'Letter', attempts: 0, lastError: null,
  sha256: null, contentSha256: null, sizeBytes: null, createdAt: '2026-12-01T22:00:00.000Z', readyAt: null, downloadUrl: null,
}
const ready: RunReport = { ...base, status: 'ready', attempts: 1, sha256: 'ab'.repeat(32), sizeBytes: 245_000, readyAt: '2026-12-01T22:00:09.000Z', downloadUrl: '/api/runs/run-1/report.pdf' }
const failed: RunReport = { ...base, status: 'failed', attempts: 3, lastError: 'The browser closed while rendering page 4' }

beforeEach(() => {
  vi.useFakeTimers()
  api.report.mockReset()
  api.retryReport.mockReset()
})
afterEach(() => vi.useRealTimers())

describe('RunSignReport', () => {
  it('when the report is pending, then it says so and asks again every 2 s until it is ready, then offers the download', async () => {
    api.report.mockResolvedValueOnce(base).mockResolvedValueOnce(base).mockResolvedValueOnce(ready)
    const wrapper = mount(RunSignReport, { props: { runId: 'run-1' } })
    await flushPromises()
    expect(wrapper.attributes('data-status')).toBe('pending')
    expect(wrapper.find('[data-test=report-progress]').text()).toMatch(/Queued/)
    await vi.advanceTimersByTimeAsync(1999)
    expect(api.report).toHaveBeenCalledTimes(1)
    await vi.advanceTimersByTimeAsync(1)
    await flushPromises()
    expect(api.report).toHaveBeenCalledTimes(2)
    await vi.advanceTimersByTimeAsync(2000)
    await flushPromises()
    expect(wrapper.attributes('data-status')).toBe('ready')
    expect(wrapper.find('[data-test=report-number]').text()).toBe('SP-2026-0007')
    expect(wrapper.find('[data-test=report-sha256]').text()).toBe('ab'.repeat(32))
    expect(wrapper.find('[data-test=report-download]').attributes('href')).toBe('/api/runs/run-1/report.pdf')
    await vi.advanceTimersByTimeAsync(10_000)
    expect(api.report).toHaveBeenCalledTimes(3)
    wrapper.unmount()
  })

  it('when the report failed, then the reason shows and only an administrator gets Retry, which starts the polling again', async () => {
    api.report.mockResolvedValue(failed)
    const reader = mount(RunSignReport, { props: { runId: 'run-1' } })
    await flushPromises()
    expect(reader.find('[data-test=report-error]').text()).toBe('The browser closed while rendering page 4')
    expect(reader.find('[data-test=report-retry]').exists()).toBe(false)
    reader.unmount()

    const admin = mount(RunSignReport, { props: { runId: 'run-1', canRetry: true } })
    await flushPromises()
    api.retryReport.mockResolvedValue({ ...base, attempts: 3 })
    api.report.mockResolvedValue(ready)
    await admin.find('[data-test=report-retry]').trigger('click')
    await flushPromises()
    expect(api.retryReport).toHaveBeenCalledWith('run-1')
    expect(admin.attributes('data-status')).toBe('pending')
    expect(admin.find('[data-test=report-progress]').text()).toMatch(/attempt 3/)
    await vi.advanceTimersByTimeAsync(2000)
    await flushPromises()
    expect(admin.attributes('data-status')).toBe('ready')
    admin.unmount()
  })

  it('when it is unmounted while the report is pending, then it stops asking', async () => {
    api.report.mockResolvedValue(base)
    const wrapper = mount(RunSignReport, { props: { runId: 'run-1' } })
    await flushPromises()
    wrapper.unmount()
    await vi.advanceTimersByTimeAsync(10_000)
    expect(api.report).toHaveBeenCalledTimes(1)
  })
})
