import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { mount, type VueWrapper } from '@vue/test-utils'
import RunFieldRamp, { rampProgress, readRows } from '@/components/RunFieldRamp.vue'
import { forgetKeptStopwatches } from '@/composables/useStopwatch'
import { evaluateField } from '@shared/rules/evaluate'
import { judgeRamp } from '@shared/rules/series'
import type { ChecklistField } from '@shared/schemas/checklist'
import { entrySchemaFor, seriesEntrySchema, type SeriesEntry } from '@shared/schemas/reading'

const oilPressureRamp: ChecklistField = {
  id: 'oilPressureRamp',
  label: 'Oil pressure from the oil pump start',
  kind: 'time_series',
  quantity: 'pressure_differential',
  unit: 'psid',
  required: true,
  rule: { type: 'ramp', setpoint: 35, reachWithinS: 30, holdS: 20, floor: 25, warnFloor: 30 },
}

function mountRamp(props: Record<string, unknown> = {}) {
  let t = 0
  // The parent's v-model: every emitted entry comes back as the new modelValue.
  const wrapper: VueWrapper = mount(RunFieldRamp, {
    props: {
      field: oilPressureRamp,
      modelValue: null,
      unitSystem: 'IP',
      clock: () => t,
      'onUpdate:modelValue': (entry: SeriesEntry | null) => wrapper.setProps({ modelValue: entry }),
      ...props,
    },
    global: { stubs: { BaseRampChart: true } },
  })
  const advance = async (ms: number) => {
    t += ms
    vi.advanceTimersByTime(ms)
    await wrapper.vm.$nextTick()
  }
  return { wrapper, advance }
}

const last = (wrapper: VueWrapper) => wrapper.emitted('update:modelValue')!.at(-1)![0] as SeriesEntry | null
const tap = (wrapper: VueWrapper, id: string) => wrapper.get(`[data-test=${id}]`).trigger('click')

function expectValidEntry(entry: SeriesEntry | null) {
  expect(entry).not.toBeNull()
  expect(seriesEntrySchema.validateSync(entry, { strict: true })).toEqual(entry)
  expect(entrySchemaFor(oilPressureRamp).isValidSync(entry)).toBe(true)
}

describe('RunFieldRamp', () => {
  beforeEach(() => {
    vi.useFakeTimers()
    forgetKeptStopwatches()
  })
  afterEach(() => vi.useRealTimers())

  it('when the ramp is captured live, then every change emits a series the reading schema accepts, with the drive start', async () => {
    const { wrapper, advance } = mountRamp()
    await tap(wrapper, 'ramp-start')
    expect(wrapper.emitted('update:modelValue')).toBeUndefined() // one point is not yet a series
    expect(wrapper.get('[data-test=ramp-carried]').text()).toContain('taken as 0 psid')

    await advance(4000)
    await wrapper.get('[data-test=ramp-pressure]').setValue('14')
    await tap(wrapper, 'ramp-add')
    expect(last(wrapper)).toEqual({ value: [[0, 0], [4, 14]], unit: 'psid' })
    expectValidEntry(last(wrapper))

    await advance(5500)
    await tap(wrapper, 'ramp-setpoint')
    expect(last(wrapper)!.value).toEqual([[0, 0], [4, 14], [9.5, 35]])
    expect(wrapper.find('[data-test=ramp-setpoint]').exists()).toBe(false)
    expect(wrapper.get('[data-test=ramp-hold]').text()).toContain('20 s')

    await advance(12_000)
    expect(wrapper.get('[data-test=ramp-hold]').text()).toContain('8 s')
    expect(wrapper.get('[data-test=ramp-status]').text()).toBe('Proving hold: 8 s to go.')
    await advance(8500)
    expect(wrapper.get('[data-test=ramp-hold]').text()).toContain('Done')

    await wrapper.get('[data-test=ramp-pressure]').setValue('36')
    await tap(wrapper, 'ramp-drive')
    const entry = last(wrapper)!
    expect(entry).toEqual({ value: [[0, 0], [4, 14], [9.5, 35], [30, 36]], unit: 'psid', driveStartS: 30 })
    expectValidEntry(entry)
    const judged = evaluateField(oilPressureRamp, entry, { unitSystem: 'IP' })
    expect(judged.verdict).toBe('pass')
    expect(judged.series!.timeToSetpointS).toBe(9.5)
    expect(judged.series!.holdAchievedS).toBeCloseTo(20.5, 6)

    // After the drive start the clock keeps going, for the dip as the compressor loads.
    await advance(3000)
    await wrapper.get('[data-test=ramp-pressure]').setValue('31')
    await tap(wrapper, 'ramp-add')
    expect(last(wrapper)!.value.at(-1)).toEqual([33, 31])
    expect(evaluateField(oilPressureRamp, last(wrapper), { unitSystem: 'IP' }).verdict).toBe('pass')
    await tap(wrapper, 'ramp-finish')
    expect(wrapper.get('[data-test=ramp-status]').text()).toContain('Clock stopped')
  })

  it('when the drive starts before the hold has run, then the truth is recorded and the judgement fails it', async () => {
    const { wrapper, advance } = mountRamp()
    await wrapper.get('[data-test=ramp-pressure]').setValue('2')
    await tap(wrapper, 'ramp-start')
    expect(wrapper.find('[data-test=ramp-carried]').exists()).toBe(false)
    await advance(8000)
    await tap(wrapper, 'ramp-setpoint')
    await advance(6000)
    await tap(wrapper, 'ramp-drive')
    const entry = last(wrapper)!
    expect(entry).toEqual({ value: [[0, 2], [8, 35], [14, 35]], unit: 'psid', driveStartS: 14 })
    expect(wrapper.get('[data-test=ramp-carried]').text()).toContain('taken as the last one, 35 psid')
    const judged = evaluateField(oilPressureRamp, entry, { unitSystem: 'IP' })
    expect(judged.verdict).toBe('fail')
    expect(judged.message).toContain('less than the 20 s required')
  })

  it('when the hold is still running, then a short hold is shown as a capture in progress, not yet as a fail', async () => {
    const { wrapper, advance } = mountRamp()
    await tap(wrapper, 'ramp-start')
    await advance(9000)
    await tap(wrapper, 'ramp-setpoint')
    const evaluation = evaluateField(oilPressureRamp, last(wrapper), { unitSystem: 'IP' })
    expect(evaluation.verdict).toBe('fail') // held 0 s up to the last point
    await wrapper.setProps({ evaluation })
    const badge = wrapper.get('[data-test=verdict-badge]')
    expect(badge.attributes('data-verdict')).toBe('incomplete')
    expect(badge.text()).toContain('Capture in progress')
    expect(wrapper.find('[data-test=ramp-judged]').exists()).toBe(false)
    await advance(21_000)
    await tap(wrapper, 'ramp-drive')
    await wrapper.setProps({ evaluation: evaluateField(oilPressureRamp, last(wrapper), { unitSystem: 'IP' }) })
    expect(wrapper.get('[data-test=verdict-badge]').attributes('data-verdict')).toBe('pass')
  })

  it('when the setpoint comes too late during the capture, then the fail is shown at once', async () => {
    const { wrapper, advance } = mountRamp()
    await tap(wrapper, 'ramp-start')
    await advance(34_000)
    await tap(wrapper, 'ramp-setpoint')
    await wrapper.setProps({ evaluation: evaluateField(oilPressureRamp, last(wrapper), { unitSystem: 'IP' }) })
    const badge = wrapper.get('[data-test=verdict-badge]')
    expect(badge.attributes('data-verdict')).toBe('fail')
    expect(badge.text()).toContain('later than the 30 s allowed')
  })

  it('when a reading is added without a number, then it asks for one and records nothing', async () => {
    const { wrapper, advance } = mountRamp()
    await tap(wrapper, 'ramp-start')
    await advance(3000)
    await tap(wrapper, 'ramp-add')
    expect(wrapper.get('[data-test=ramp-pressure-problem]').text()).toBe('Type the gauge reading in psid first.')
    expect(wrapper.emitted('update:modelValue')).toBeUndefined()
  })

  it('when the project is SI, then readings are in kPa and the setpoint stamp is never below the setpoint', async () => {
    const { wrapper, advance } = mountRamp({ unitSystem: 'SI' })
    await tap(wrapper, 'ramp-start')
    await advance(9000)
    await tap(wrapper, 'ramp-setpoint')
    const entry = last(wrapper)!
    expect(entry.unit).toBe('kPad')
    expect(entry.value[1][1]).toBeGreaterThanOrEqual(241.3165)
    expect(entry.value[1][1]).toBeLessThan(241.32)
    const judged = evaluateField(oilPressureRamp, entry, { unitSystem: 'SI' })
    expect(judged.series!.timeToSetpointS).toBeCloseTo(9, 3)
    expect(wrapper.get('[data-test=ramp-window]').text()).toContain('Reach 241 kPa (diff) within 30 s')
  })

  it('when the technician timed it by hand, then the table rows and the drive start are emitted as the series', async () => {
    const { wrapper } = mountRamp()
    await tap(wrapper, 'ramp-add-row')
    await tap(wrapper, 'ramp-add-row')
    await tap(wrapper, 'ramp-add-row')
    await wrapper.get('[data-test=ramp-row-t-0]').setValue('0')
    await wrapper.get('[data-test=ramp-row-p-0]').setValue('0')
    expect(wrapper.get('[data-test=ramp-table-note]').text()).toContain('Add at least one more reading')
    await wrapper.get('[data-test=ramp-row-t-1]').setValue('10')
    await wrapper.get('[data-test=ramp-row-p-1]').setValue('36')
    expect(last(wrapper)).toEqual({ value: [[0, 0], [10, 36]], unit: 'psid' })
    await wrapper.get('[data-test=ramp-row-t-2]').setValue('32,5')
    await wrapper.get('[data-test=ramp-row-p-2]').setValue('36.5')
    await wrapper.get('[data-test=ramp-drive-input]').setValue('32.5')
    const entry = last(wrapper)
    expect(entry).toEqual({ value: [[0, 0], [10, 36], [32.5, 36.5]], unit: 'psid', driveStartS: 32.5 })
    expectValidEntry(entry)
  })

  it('when a typed time does not increase, then the message names the row and the last good series stays', async () => {
    const { wrapper } = mountRamp({ modelValue: { value: [[0, 0], [10, 36], [30, 36]], unit: 'psid', driveStartS: 30 } })
    expect((wrapper.get('[data-test=ramp-row-t-2]').element as HTMLInputElement).value).toBe('30')
    await wrapper.get('[data-test=ramp-row-t-2]').setValue('8')
    expect(wrapper.get('[data-test=ramp-table-note]').text()).toBe('Row 3 (8 s) is not after the row before it (10 s): times must increase.')
    expect(wrapper.get('[data-test=ramp-table-note]').attributes('role')).toBe('alert')
    expect(wrapper.emitted('update:modelValue')).toBeUndefined()
    await wrapper.get('[data-test=ramp-row-remove-2]').trigger('click')
    expect(last(wrapper)).toEqual({ value: [[0, 0], [10, 36]], unit: 'psid', driveStartS: 30 })
    expect(wrapper.get('[data-test=ramp-table-note]').text()).toContain('after the last reading')
  })

  it('when the same entry comes back from the server with its keys in another order, then the table keeps what was typed', async () => {
    const { wrapper } = mountRamp({ modelValue: { value: [[0, 0], [10, 36]], unit: 'psid' } })
    await wrapper.get('[data-test=ramp-row-t-1]').setValue('10.50')
    expect(last(wrapper)).toEqual({ value: [[0, 0], [10.5, 36]], unit: 'psid' })
    await wrapper.setProps({ modelValue: { unit: 'psid', value: [[0, 0], [10.5, 36]] } as SeriesEntry })
    expect((wrapper.get('[data-test=ramp-row-t-1]').element as HTMLInputElement).value).toBe('10.50')
    await wrapper.setProps({ modelValue: { value: [[0, 0], [11, 37]], unit: 'psid' } })
    expect((wrapper.get('[data-test=ramp-row-t-1]').element as HTMLInputElement).value).toBe('11')
  })

  it('when a new capture is started over a recorded ramp, then it asks first and only then clears the reading', async () => {
    const { wrapper } = mountRamp({ modelValue: { value: [[0, 0], [10, 36]], unit: 'psid' } })
    expect(wrapper.get('[data-test=ramp-start]').text()).toBe('Start a new capture')
    await tap(wrapper, 'ramp-start')
    expect(wrapper.get('[data-test=ramp-start]').text()).toBe('Replace the recorded ramp')
    await tap(wrapper, 'ramp-keep')
    expect(wrapper.emitted('update:modelValue')).toBeUndefined()
    await tap(wrapper, 'ramp-start')
    await tap(wrapper, 'ramp-start')
    expect(last(wrapper)).toBeNull()
    expect(wrapper.findAll('[data-test^=ramp-row-t-]')).toHaveLength(1)
  })

  it('when an evaluation is given, then its verdict badge and the judged times are shown', () => {
    const entry: SeriesEntry = { value: [[0, 0], [8, 36], [29, 36], [34, 28]], unit: 'psid', driveStartS: 29 }
    const evaluation = evaluateField(oilPressureRamp, entry, { unitSystem: 'IP' })
    const { wrapper } = mountRamp({ modelValue: entry, evaluation })
    const badge = wrapper.get('[data-test=verdict-badge]')
    expect(badge.attributes('data-verdict')).toBe('marginal')
    expect(badge.text()).toContain('Marginal')
    expect(wrapper.get('[data-test=ramp-judged]').text()).toBe('Setpoint reached at 7.8 s · held 21.2 s before the drive · lowest afterwards 28 psid')
  })

  it('when disabled, then no capture can start and the table cannot be edited', () => {
    const { wrapper } = mountRamp({ disabled: true, modelValue: { value: [[0, 0], [10, 36]], unit: 'psid' } })
    expect(wrapper.get('[data-test=ramp-start]').attributes('disabled')).toBeDefined()
    expect(wrapper.get('[data-test=ramp-row-t-0]').attributes('disabled')).toBeDefined()
    expect(wrapper.get('[data-test=ramp-add-row]').attributes('disabled')).toBeDefined()
  })
})

describe('ramp helpers', () => {
  it.each([
    [[[0, 0], [10, 40]], 8.75],
    [[[0, 0], [5, 20], [9, 36], [20, 37]], 8.75],
    [[[0, 36], [5, 37]], 0],
    [[[0, 0], [10, 20]], null],
  ] as Array<[Array<[number, number]>, number | null]>)('when the setpoint is first reached, then the time agrees with the shared judgement (%j)', (points, expected) => {
    const progress = rampProgress(points, 35)
    expect(progress.reachedAtS).toBe(expected)
    expect(judgeRamp(points, { setpoint: 35, reachWithinS: 30 }).timeToSetpointS).toBe(expected)
  })

  it('when the pressure falls back below the setpoint, then the hold starts again at the next crossing', () => {
    expect(rampProgress([[0, 0], [8, 36], [12, 30], [16, 36]], 35)).toEqual({ reachedAtS: expect.closeTo(7.78, 2), aboveSinceS: expect.closeTo(15.33, 2) })
    expect(rampProgress([[0, 0], [8, 36], [12, 30]], 35).aboveSinceS).toBeNull()
  })

  it('when rows are read, then blank rows are skipped and half-filled ones are named', () => {
    expect(readRows([{ t: '0', p: '0' }, { t: '', p: '' }, { t: '5', p: '20' }], '')).toEqual({ kind: 'entry', points: [[0, 0], [5, 20]] })
    expect(readRows([{ t: '0', p: '0' }, { t: '5', p: '' }], '')).toMatchObject({ kind: 'problem', message: 'Row 2 needs both the time and the reading.' })
    expect(readRows([], '')).toEqual({ kind: 'empty' })
    expect(readRows([{ t: '0', p: '0' }, { t: '5', p: '20' }], '-1')).toMatchObject({ kind: 'problem', message: 'The drive start cannot be negative.' })
  })
})
