import { defineAsyncComponent, h } from 'vue'

// Heavy components a page needs only for some fields: each is its own chunk, fetched when first drawn, so a cold load
// of the runner on weak signal does not wait for them. echarts alone is about half a megabyte of JavaScript.

/** The oil-pressure ramp chart (echarts): only start-sequence fields draw it. */
export const loadRampChart = () => import('@/components/BaseRampChart.vue')

const placeholder = (text: string, test: string) => () =>
  h('p', { class: 'sp-muted lazy-placeholder', role: 'status', 'data-test': test, style: 'margin: 0; padding: 12px 4px;' }, text)

/** BaseRampChart, loaded on first use; if the link drops before it arrives, the readings table still carries the work. */
export const AsyncRampChart = defineAsyncComponent({
  loader: loadRampChart,
  loadingComponent: placeholder('Drawing the chart…', 'ramp-chart-loading'),
  delay: 150,
  errorComponent: placeholder('The chart could not be loaded without a connection; the readings below are kept and judged as usual.', 'ramp-chart-unavailable'),
  onError(_error, retry, fail, attempts) {
    // The chunk is tried again when the tablet is back online (the runner keeps working offline meanwhile).
    if (attempts <= 3 && typeof window !== 'undefined') window.addEventListener('online', () => retry(), { once: true })
    else fail()
  },
})

/**
 * Fetches a lazy chunk once the page is idle, so that a runner opened on signal has it when the technician later walks
 * into a plant room without one. Failures are ignored: the component is fetched again when drawn.
 */
export function prefetchWhenIdle(load: () => Promise<unknown>): void {
  if (typeof window === 'undefined') return
  const start = () => void load().catch(() => undefined)
  const idle = (window as Window & { requestIdleCallback?: (cb: () => void, opts?: { timeout: number }) => number }).requestIdleCallback
  if (idle) idle(start, { timeout: 5000 })
  else window.setTimeout(start, 2000)
}
