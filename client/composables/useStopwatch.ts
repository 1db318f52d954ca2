import { computed, getCurrentScope, onScopeDispose, reactive, ref, watch, type Ref } from 'vue'

/** Milliseconds from an arbitrary origin that only moves forward, as performance.now() gives. */
export type StopwatchClock = () => number

export interface StopwatchOptions {
  /** Monotonic clock in ms; performance.now() by default (wall-clock time can jump when the tablet syncs). */
  now?: StopwatchClock
  /** How often the displayed elapsed time refreshes while running, in ms. */
  tickMs?: number
  /**
   * Keeps the stopwatch in memory under this key for the rest of the page's life, so a field that is
   * unmounted and mounted again (stepping back and forth) finds its stopwatch still running.
   */
  key?: string
}

interface StopwatchState {
  running: boolean
  /** Clock reading when the current running segment began. */
  segmentStartMs: number
  /** Time banked by earlier segments (start → stop), in ms. */
  bankedMs: number
  /** Elapsed seconds at each lap. */
  laps: number[]
}

export interface Stopwatch {
  /** Elapsed seconds, refreshed every tick while running and exactly on every action. */
  elapsedS: Readonly<Ref<number>>
  running: Readonly<Ref<boolean>>
  /** Elapsed seconds recorded by lap(), oldest first. */
  laps: Readonly<Ref<readonly number[]>>
  /** Starts, or resumes after stop(); does nothing while running. */
  start(): void
  /** Stops and returns the elapsed seconds at that instant. */
  stop(): number
  /** Stops and clears the elapsed time and laps. */
  reset(): void
  /** Records and returns the elapsed seconds at this instant; null when not running. */
  lap(): number | null
  /** The elapsed seconds right now, read from the clock rather than the last tick. */
  read(): number
}

const kept = new Map<string, StopwatchState>()

const freshState = (): StopwatchState => ({ running: false, segmentStartMs: 0, bankedMs: 0, laps: [] })

/** Forgets every stopwatch kept under a key (for tests and signing out). */
export function forgetKeptStopwatches(): void {
  kept.clear()
}

/**
 * A stopwatch on a monotonic clock. Elapsed time is worked out from the clock on every read, so a slow
 * or skipped tick never loses time; the tick only refreshes what is on screen.
 */
export function useStopwatch(options: StopwatchOptions = {}): Stopwatch {
  const now: StopwatchClock = options.now ?? (() => performance.now())
  const tickMs = options.tickMs ?? 100

  let state: StopwatchState
  if (options.key !== undefined) {
    const existing = kept.get(options.key)
    state = existing ?? reactive(freshState())
    if (!existing) kept.set(options.key, state)
  } else {
    state = reactive(freshState())
  }

  const nowMs = ref(now())
  const elapsedMsAt = (t: number) => state.bankedMs + (state.running ? Math.max(0, t - state.segmentStartMs) : 0)
  const elapsedS = computed(() => elapsedMsAt(nowMs.value) / 1000)
  const refresh = () => {
    nowMs.value = now()
    return nowMs.value
  }

  let timer: ReturnType<typeof setInterval> | null = null
  const stopTicking = () => {
    if (timer !== null) clearInterval(timer)
    timer = null
  }
  watch(
    () => state.running,
    (running) => {
      stopTicking()
      if (running) timer = setInterval(refresh, tickMs)
      refresh()
    },
    // Synchronous, so the tick is running by the time start() returns.
    { immediate: true, flush: 'sync' },
  )
  if (getCurrentScope()) onScopeDispose(stopTicking)

  return {
    elapsedS,
    running: computed(() => state.running),
    laps: computed(() => state.laps),
    start() {
      if (state.running) return
      state.segmentStartMs = refresh()
      state.running = true
    },
    stop() {
      const t = refresh()
      if (state.running) {
        state.bankedMs = elapsedMsAt(t)
        state.running = false
      }
      return state.bankedMs / 1000
    },
    reset() {
      state.running = false
      state.bankedMs = 0
      state.segmentStartMs = 0
      state.laps = []
      refresh()
    },
    lap() {
      if (!state.running) return null
      const s = elapsedMsAt(refresh()) / 1000
      state.laps = [...state.laps, s]
      return s
    },
    read() {
      return elapsedMsAt(refresh()) / 1000
    },
  }
}

/** Elapsed seconds as a stopwatch shows them, "mm:ss.s" (minutes keep counting past 59). */
export function formatElapsed(seconds: number): string {
  const tenths = Math.max(0, Math.floor(Number.isFinite(seconds) ? seconds * 10 + 1e-6 : 0))
  const minutes = Math.floor(tenths / 600)
  const rest = tenths - minutes * 600
  const secs = Math.floor(rest / 10)
  return `${String(minutes).padStart(2, '0')}:${String(secs).padStart(2, '0')}.${rest % 10}`
}
