import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { mount } from '@vue/test-utils'
import RunFieldTimer, { secondsToEntry, timerWindowWords } from '@/components/RunFieldTimer.vue'
import { forgetKeptStopwatches } from '@/composables/useStopwatch'
import { evaluateField } from '@shared/rules/evaluate'
import type { ChecklistField } from '@shared/schemas/checklist'
import { entrySchemaFor } from '@shared/schemas/reading'

const prelube: ChecklistField = {
  id: 'prelubeTime',
  label: 'Pre-lubrication time: oil pump start to drive start',
  kind: 'timer',
  quantity: 'time',
  unit: 's',
  required: true,
  rule: { type: 'range', min: 20, warnMax: 60, max: 120 },
}
const inMinutes: ChecklistField = { ...prelube, id: 'standbyLube', label: 'Standby lubrication run', unit: 'min', rule: { type: 'range', min: 1, max: 3 } }

function mountTimer(field: ChecklistField, extra: Record<string, unknown> = {}) {
  let t = 0
  const wrapper = mount(RunFieldTimer, { props: { field, modelValue: null, clock: () => t, ...extra } })
  const advance = async (ms: number) => {
    t += ms
    vi.advanceTimersByTime(ms)
    await wrapper.vm.$nextTick()
  }
  return { wrapper, advance }
}

describe('RunFieldTimer', () => {
  beforeEach(() => {
    vi.useFakeTimers()
    forgetKeptStopwatches()
  })
  afterEach(() => vi.useRealTimers())

  it('when started and stopped 24.3 s later, then it emits 24.3 s as a timer entry the field accepts', async () => {
    const { wrapper, advance } = mountTimer(prelube)
    expect(wrapper.get('[data-test=timer-stop]').attributes('disabled')).toBeDefined()
    await wrapper.get('[data-test=timer-start]').trigger('click')
    await advance(24_300)
    expect(wrapper.get('[data-test=timer-clock]').text()).toContain('00:24.3')
    await wrapper.get('[data-test=timer-stop]').trigger('click')
    const emitted = wrapper.emitted('update:modelValue')!
    expect(emitted).toHaveLength(1)
    expect(emitted[0][0]).toEqual({ value: 24.3, unit: 's' })
    expect(entrySchemaFor(prelube).isValidSync(emitted[0][0])).toBe(true)
  })

  it('when the field is in minutes, then the stopped time is converted to minutes', async () => {
    const { wrapper, advance } = mountTimer(inMinutes)
    await wrapper.get('[data-test=timer-start]').trigger('click')
    await advance(90_000)
    await wrapper.get('[data-test=timer-stop]').trigger('click')
    expect(wrapper.emitted('update:modelValue')![0][0]).toEqual({ value: 1.5, unit: 'min' })
    expect(wrapper.find('.unit').text()).toBe('min')
  })

  it('when a running timing is discarded, then nothing is emitted and the clock is back at zero', async () => {
    const { wrapper, advance } = mountTimer(prelube)
    await wrapper.get('[data-test=timer-start]').trigger('click')
    await advance(5000)
    await wrapper.get('[data-test=timer-discard]').trigger('click')
    expect(wrapper.emitted('update:modelValue')).toBeUndefined()
    expect(wrapper.get('[data-test=timer-clock]').text()).toContain('00:00.0')
  })

  it('when a time is typed by hand, then it is emitted in the field unit; a negative one is refused with a message; emptying clears it', async () => {
    const { wrapper } = mountTimer(prelube, { modelValue: { value: 30, unit: 's' } })
    const input = wrapper.get('[data-test=timer-input]')
    expect((input.element as HTMLInputElement).value).toBe('30')
    await input.setValue('42,5')
    expect(wrapper.emitted('update:modelValue')!.at(-1)![0]).toEqual({ value: 42.5, unit: 's' })
    await input.setValue('-3')
    expect(wrapper.get('[role=alert]').text()).toBe('A duration cannot be negative.')
    expect(wrapper.emitted('update:modelValue')).toHaveLength(1)
    await input.setValue('')
    await input.trigger('change')
    expect(wrapper.emitted('update:modelValue')!.at(-1)![0]).toBeNull()
  })

  it('when a new value arrives from outside, then the box shows it', async () => {
    const { wrapper } = mountTimer(prelube)
    await wrapper.setProps({ modelValue: { value: 61.2, unit: 's' } })
    expect((wrapper.get('[data-test=timer-input]').element as HTMLInputElement).value).toBe('61.2')
  })

  it('when an evaluation is given, then its limits are shown in words and its verdict as a badge', () => {
    const entry = { value: 75, unit: 's' }
    const evaluation = evaluateField(prelube, entry, { unitSystem: 'IP' })
    const { wrapper } = mountTimer(prelube, { modelValue: entry, evaluation })
    expect(wrapper.get('[data-test=timer-window]').text()).toBe('Window 20 s to 120 s; marginal above 60 s')
    const badge = wrapper.get('[data-test=verdict-badge]')
    expect(badge.attributes('data-verdict')).toBe('marginal')
    expect(badge.text()).toContain('Marginal')
    expect(badge.text()).toContain(evaluation.message)
  })

  it('when nothing is recorded yet, then the window still comes from the field rule', () => {
    expect(timerWindowWords(prelube, null)).toBe('20 s to 120 s; marginal above 60 s')
    expect(timerWindowWords({ ...prelube, rule: { type: 'nominal', nominal: 5, tolerance: 1 } }, null)).toBe('4 s to 6 s (nominal 5 s ± 1 s)')
    expect(timerWindowWords({ ...prelube, rule: { type: 'design', key: 'capacity', lowerPct: 10 } }, null)).toBeNull()
  })

  it('when disabled, then start and the box are disabled and a tap does nothing', async () => {
    const { wrapper } = mountTimer(prelube, { disabled: true })
    expect(wrapper.get('[data-test=timer-start]').attributes('disabled')).toBeDefined()
    expect(wrapper.get('[data-test=timer-input]').attributes('disabled')).toBeDefined()
    await wrapper.get('[data-test=timer-start]').trigger('click')
    expect(wrapper.get('[data-test=timer-clock]').text()).toContain('Ready')
  })

  it('when seconds become an entry, then they are kept to the tenth', () => {
    expect(secondsToEntry(24.349, 's')).toEqual({ value: 24.3, unit: 's' })
    expect(secondsToEntry(30, 'min')).toEqual({ value: 0.5, unit: 'min' })
  })
})
