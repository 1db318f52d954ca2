import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { mount } from '@vue/test-utils'
import RunFieldStarterRamp from '@/components/RunFieldStarterRamp.vue'
import { forgetKeptStopwatches } from '@/composables/useStopwatch'
import { evaluateField } from '@shared/rules/evaluate'
import type { ChecklistField } from '@shared/schemas/checklist'
import { entrySchemaFor } from '@shared/schemas/reading'

const starterRamp: ChecklistField = {
  id: 'starterRampTime',
  label: 'Start command to full speed',
  kind: 'timer',
  quantity: 'time',
  unit: 's',
  required: true,
  rule: { type: 'range', min: 2, warnMin: 3, warnMax: 8, max: 12 },
}

function mountStarter(extra: Record<string, unknown> = {}) {
  let t = 0
  const wrapper = mount(RunFieldStarterRamp, { props: { field: starterRamp, modelValue: null, clock: () => t, ...extra } })
  const advance = async (ms: number) => {
    t += ms
    vi.advanceTimersByTime(ms)
    await wrapper.vm.$nextTick()
  }
  return { wrapper, advance }
}

describe('RunFieldStarterRamp', () => {
  beforeEach(() => {
    vi.useFakeTimers()
    forgetKeptStopwatches()
  })
  afterEach(() => vi.useRealTimers())

  it('when tapped at the start command and again at full speed 4.2 s later, then it emits 4.2 s', async () => {
    const { wrapper, advance } = mountStarter()
    const tap = wrapper.get('[data-test=starter-tap]')
    expect(tap.text()).toContain('Tap at start command')
    await tap.trigger('click')
    expect(tap.text()).toContain('Tap at full speed')
    await advance(4200)
    expect(wrapper.get('[data-test=starter-clock]').text()).toContain('00:04.2')
    await tap.trigger('click')
    const entry = wrapper.emitted('update:modelValue')![0][0]
    expect(entry).toEqual({ value: 4.2, unit: 's' })
    expect(entrySchemaFor(starterRamp).isValidSync(entry)).toBe(true)
    expect(tap.text()).toContain('Tap at start command')
    expect(wrapper.get('[data-test=starter-clock]').text()).toContain('Measured 4.2 s')
  })

  it('when the second tap comes a bounce after the first, then it is ignored and the timing goes on', async () => {
    const { wrapper, advance } = mountStarter()
    const tap = wrapper.get('[data-test=starter-tap]')
    await tap.trigger('click')
    await advance(150)
    await tap.trigger('click')
    expect(wrapper.emitted('update:modelValue')).toBeUndefined()
    await advance(3350)
    await tap.trigger('click')
    expect(wrapper.emitted('update:modelValue')![0][0]).toEqual({ value: 3.5, unit: 's' })
  })

  it('when the start does not go ahead, then discarding emits nothing and the next tap starts afresh', async () => {
    const { wrapper, advance } = mountStarter()
    await wrapper.get('[data-test=starter-tap]').trigger('click')
    await advance(9000)
    await wrapper.get('[data-test=starter-discard]').trigger('click')
    expect(wrapper.emitted('update:modelValue')).toBeUndefined()
    await wrapper.get('[data-test=starter-tap]').trigger('click')
    await advance(5000)
    await wrapper.get('[data-test=starter-tap]').trigger('click')
    expect(wrapper.emitted('update:modelValue')![0][0]).toEqual({ value: 5, unit: 's' })
  })

  it('when the time is typed from the starter display, then it is emitted as typed', async () => {
    const { wrapper } = mountStarter()
    await wrapper.get('[data-test=starter-input]').setValue('4.6')
    expect(wrapper.emitted('update:modelValue')![0][0]).toEqual({ value: 4.6, unit: 's' })
  })

  it('when evaluated, then the window and the verdict badge are shown', () => {
    const entry = { value: 13, unit: 's' }
    const evaluation = evaluateField(starterRamp, entry, { unitSystem: 'SI' })
    const { wrapper } = mountStarter({ modelValue: entry, evaluation })
    expect(wrapper.get('[data-test=starter-window]').text()).toBe('Window 2 s to 12 s; marginal below 3 s or above 8 s')
    const badge = wrapper.get('[data-test=verdict-badge]')
    expect(badge.attributes('data-verdict')).toBe('fail')
    expect(badge.text()).toContain('Fail')
  })
})
