import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { effectScope, nextTick } from 'vue'
import { forgetKeptStopwatches, useStopwatch } from '@/composables/useStopwatch'

/** A hand-driven monotonic clock that moves with vitest's fake timers. */
function fakeClock() {
  let t = 1000
  return {
    now: () => t,
    advance(ms: number) {
      t += ms
      vi.advanceTimersByTime(ms)
    },
  }
}

describe('useStopwatch', () => {
  beforeEach(() => {
    vi.useFakeTimers()
    forgetKeptStopwatches()
  })
  afterEach(() => {
    vi.useRealTimers()
  })

  it('when started and left running, then elapsedS follows the clock tick by tick', () => {
    const clock = fakeClock()
    const sw = useStopwatch({ now: clock.now })
    expect(sw.elapsedS.value).toBe(0)
    sw.start()
    expect(sw.running.value).toBe(true)
    clock.advance(2500)
    expect(sw.elapsedS.value).toBeCloseTo(2.5, 6)
    clock.advance(100)
    expect(sw.elapsedS.value).toBeCloseTo(2.6, 6)
  })

  it('when stopped between ticks, then it returns the exact elapsed seconds from the clock, not the last tick', () => {
    let t = 0
    const sw = useStopwatch({ now: () => t, tickMs: 1000 })
    sw.start()
    t += 4000
    vi.advanceTimersByTime(4000)
    expect(sw.elapsedS.value).toBeCloseTo(4, 6)
    t += 370 // no tick falls in these 370 ms
    expect(sw.stop()).toBeCloseTo(4.37, 6)
    expect(sw.elapsedS.value).toBeCloseTo(4.37, 6)
  })

  it('when stopped and started again, then time banks across the pause and the pause itself is not counted', () => {
    const clock = fakeClock()
    const sw = useStopwatch({ now: clock.now })
    sw.start()
    clock.advance(3000)
    expect(sw.stop()).toBeCloseTo(3, 6)
    clock.advance(10_000)
    expect(sw.elapsedS.value).toBeCloseTo(3, 6)
    expect(sw.running.value).toBe(false)
    sw.start()
    clock.advance(1500)
    expect(sw.stop()).toBeCloseTo(4.5, 6)
  })

  it('when lapped, then each lap records the elapsed seconds; a lap while stopped records nothing', () => {
    const clock = fakeClock()
    const sw = useStopwatch({ now: clock.now })
    expect(sw.lap()).toBeNull()
    sw.start()
    clock.advance(8000)
    expect(sw.lap()).toBeCloseTo(8, 6)
    clock.advance(20_000)
    expect(sw.lap()).toBeCloseTo(28, 6)
    expect(sw.laps.value).toEqual([8, 28])
    sw.stop()
    expect(sw.lap()).toBeNull()
    expect(sw.laps.value).toHaveLength(2)
  })

  it('when reset, then it stops, reads zero and forgets its laps', () => {
    const clock = fakeClock()
    const sw = useStopwatch({ now: clock.now })
    sw.start()
    clock.advance(5000)
    sw.lap()
    sw.reset()
    expect(sw.running.value).toBe(false)
    expect(sw.elapsedS.value).toBe(0)
    expect(sw.laps.value).toEqual([])
    clock.advance(5000)
    expect(sw.elapsedS.value).toBe(0)
  })

  it('when started twice, then the second start does not restart the count', () => {
    const clock = fakeClock()
    const sw = useStopwatch({ now: clock.now })
    sw.start()
    clock.advance(2000)
    sw.start()
    clock.advance(1000)
    expect(sw.read()).toBeCloseTo(3, 6)
  })

  it('when no clock is given, then it reads performance.now()', () => {
    let t = 50_000
    const spy = vi.spyOn(performance, 'now').mockImplementation(() => t)
    const sw = useStopwatch()
    sw.start()
    t += 1234
    expect(sw.read()).toBeCloseTo(1.234, 6)
    expect(spy).toHaveBeenCalled()
    spy.mockRestore()
  })

  it('when its owner goes away, then the tick stops; a kept stopwatch is found running by the next owner', async () => {
    const clock = fakeClock()
    const first = effectScope()
    const sw1 = first.run(() => useStopwatch({ now: clock.now, key: 'run-1:prelubeTime' }))!
    sw1.start()
    clock.advance(6000)
    first.stop()
    expect(vi.getTimerCount()).toBe(0)

    clock.advance(4000)
    const second = effectScope()
    const sw2 = second.run(() => useStopwatch({ now: clock.now, key: 'run-1:prelubeTime' }))!
    await nextTick()
    expect(sw2.running.value).toBe(true)
    expect(sw2.elapsedS.value).toBeCloseTo(10, 6)
    expect(vi.getTimerCount()).toBe(1)

    const other = useStopwatch({ now: clock.now, key: 'run-2:prelubeTime' })
    expect(other.running.value).toBe(false)
    second.stop()
  })
})
