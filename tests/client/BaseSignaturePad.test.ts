import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest'
import { mount } from '@vue/test-utils'

// jsdom draws nothing on a canvas, so the library is replaced by a stand-in that records what the wrapper asks of it.
const pads: FakePad[] = []
class FakePad {
  strokes: unknown[] = []
  listeners: Record<string, Array<() => void>> = {}
  cleared = 0
  redrawnWith: unknown[][] = []
  enabled = true
  constructor(
    readonly canvas: HTMLCanvasElement,
    readonly options: Record<string, unknown>,
  ) {
    pads.push(this)
  }
  addEventListener(name: string, fn: () => void) {
    ;(this.listeners[name] ??= []).push(fn)
  }
  isEmpty() {
    return this.strokes.length === 0
  }
  toDataURL(type: string) {
    return `data:${type};base64,c3Ryb2tlcw==`
  }
  toData() {
    return [...this.strokes]
  }
  fromData(data: unknown[]) {
    this.strokes = [...data]
    this.redrawnWith.push(data)
  }
  clear() {
    this.strokes = []
    this.cleared++
  }
  on() {
    this.enabled = true
  }
  off() {
    this.enabled = false
  }
  draw() {
    this.strokes.push({ points: [{ x: 10, y: 10 }, { x: 80, y: 40 }] })
    for (const fn of this.listeners.endStroke ?? []) fn()
  }
}
vi.mock('signature_pad', () => ({ default: FakePad }))

const { default: BaseSignaturePad } = await import('@/components/BaseSignaturePad.vue')

let width = 600
let height = 220
beforeEach(() => {
  pads.length = 0
  width = 600
  height = 220
  Object.defineProperty(HTMLElement.prototype, 'offsetWidth', { configurable: true, get: () => width })
  Object.defineProperty(HTMLElement.prototype, 'offsetHeight', { configurable: true, get: () => height })
  HTMLCanvasElement.prototype.getContext = vi.fn(() => ({ scale: vi.fn() })) as never
  window.devicePixelRatio = 2
})
afterEach(() => {
  window.devicePixelRatio = 1
})

const mountPad = () => mount(BaseSignaturePad)

describe('BaseSignaturePad', () => {
  it('when it opens on a screen with two device pixels per CSS pixel, then the drawing surface has twice the pixels of its box', () => {
    const wrapper = mountPad()
    const canvas = wrapper.find('canvas').element as HTMLCanvasElement
    expect(canvas.width).toBe(1200)
    expect(canvas.height).toBe(440)
    expect(pads[0].canvas).toBe(canvas)
  })

  it('when a stroke ends, then it emits the drawing as a PNG data URL and says a signature is drawn', async () => {
    const wrapper = mountPad()
    pads[0].draw()
    await wrapper.vm.$nextTick()
    expect(wrapper.emitted('change')).toEqual([['data:image/png;base64,c3Ryb2tlcw==']])
    expect(wrapper.find('[data-test=signature-state]').text()).toBe('Signature drawn')
    expect(wrapper.find('[data-test=signature-pad]').classes()).not.toContain('empty')
  })

  it('when Clear is pressed after drawing, then the pad is emptied and it emits null', async () => {
    const wrapper = mountPad()
    const clear = wrapper.find('[data-test=signature-clear]')
    expect(clear.attributes('disabled')).toBeDefined()
    pads[0].draw()
    await wrapper.vm.$nextTick()
    expect(clear.attributes('disabled')).toBeUndefined()
    await clear.trigger('click')
    expect(wrapper.emitted('change')!.at(-1)).toEqual([null])
    expect(pads[0].isEmpty()).toBe(true)
    expect(wrapper.find('[data-test=signature-state]').text()).toBe('Nothing drawn yet')
  })

  it('when the window is resized after drawing, then the surface is sized again and the strokes are drawn back, not lost', async () => {
    const wrapper = mountPad()
    pads[0].draw()
    width = 400
    window.dispatchEvent(new Event('resize'))
    await wrapper.vm.$nextTick()
    const canvas = wrapper.find('canvas').element as HTMLCanvasElement
    expect(canvas.width).toBe(800)
    expect(pads[0].redrawnWith).toHaveLength(1)
    expect(pads[0].redrawnWith[0]).toHaveLength(1)
    expect(pads[0].isEmpty()).toBe(false)
  })

  it('when it is unmounted, then it stops listening for strokes and resizes', () => {
    const wrapper = mountPad()
    const pad = pads[0]
    wrapper.unmount()
    expect(pad.enabled).toBe(false)
    width = 300
    window.dispatchEvent(new Event('resize'))
    expect(pad.redrawnWith).toHaveLength(0)
  })
})
