import type { Store, SessionData } from 'express-session'

/** How often one session's stored expiry is written while it is in use. */
export const SESSION_TOUCH_INTERVAL_MS = 60_000

/**
 * Writes a session's sliding expiry at most once per interval: with `rolling` sessions express-session touches the
 * store on every request, which would be one UPDATE per API call. The expiry then lags by under a minute, which a
 * twelve-hour session does not notice. Remembered per process, for at most `maxTracked` sessions (oldest forgotten).
 */
export function throttleTouch<S extends Store>(store: S, options: { intervalMs?: number; now?: () => number; maxTracked?: number } = {}): S {
  const intervalMs = options.intervalMs ?? SESSION_TOUCH_INTERVAL_MS
  const now = options.now ?? Date.now
  const maxTracked = options.maxTracked ?? 50_000
  const touchedAt = new Map<string, number>()
  const touch = store.touch?.bind(store)
  if (!touch) return store
  store.touch = (sid: string, session: SessionData, callback?: (err?: unknown) => void) => {
    const t = now()
    const last = touchedAt.get(sid)
    if (last !== undefined && t - last < intervalMs) {
      callback?.()
      return
    }
    touchedAt.delete(sid)
    touchedAt.set(sid, t)
    if (touchedAt.size > maxTracked) touchedAt.delete(touchedAt.keys().next().value as string)
    touch(sid, session, callback)
  }
  // A session written in full (sign-in, a change to its data) has just had its expiry stored too.
  const set = store.set.bind(store)
  store.set = (sid: string, session: SessionData, callback?: (err?: unknown) => void) => {
    touchedAt.delete(sid)
    touchedAt.set(sid, now())
    set(sid, session, callback)
  }
  const destroy = store.destroy.bind(store)
  store.destroy = (sid: string, callback?: (err?: unknown) => void) => {
    touchedAt.delete(sid)
    destroy(sid, callback)
  }
  return store
}
