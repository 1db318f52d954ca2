import session from 'express-session'
import { describe, expect, it } from 'vitest'
import { SESSION_TOUCH_INTERVAL_MS, throttleTouch } from '../../server/middleware/session-touch'

/** express-session's own in-memory store, with its touches counted. */
function countedStore() {
  const store = new session.MemoryStore()
  const touched: string[] = []
  const touch = store.touch.bind(store)
  store.touch = (sid, sess, cb) => {
    touched.push(sid)
    touch(sid, sess, cb)
  }
  return { store, touched }
}

const sess = (): session.SessionData => ({ cookie: Object.assign(new session.Cookie(), { maxAge: 3600_000 }) }) as session.SessionData

describe('throttleTouch', () => {
  it('when a session is used many times a minute, then its stored expiry is written at most once a minute', async () => {
    let t = 1_000_000
    const { store, touched } = countedStore()
    const throttled = throttleTouch(store, { now: () => t })
    await new Promise<void>((r) => throttled.set('a', sess(), () => r()))
    // Just written in full at sign-in: the next touches within the minute are skipped, and still answered.
    let answered = 0
    for (let i = 0; i < 5; i++) {
      t += 5_000
      throttled.touch('a', sess(), () => { answered += 1 })
    }
    expect(touched).toEqual([])
    expect(answered).toBe(5)
    t += SESSION_TOUCH_INTERVAL_MS
    throttled.touch('a', sess(), () => {})
    expect(touched).toEqual(['a'])
    t += 1_000
    throttled.touch('a', sess(), () => {})
    throttled.touch('b', sess(), () => {})
    expect(touched).toEqual(['a', 'b'])
  })

  it('when a session is destroyed (sign-out), then a new one under the same id is touched at once', async () => {
    let t = 0
    const { store, touched } = countedStore()
    const throttled = throttleTouch(store, { now: () => t })
    throttled.touch('x', sess(), () => {})
    await new Promise<void>((r) => throttled.destroy('x', () => r()))
    t += 1
    throttled.touch('x', sess(), () => {})
    expect(touched).toEqual(['x', 'x'])
  })

  it('when more sessions are tracked than the limit, then the oldest are forgotten and simply touched again', () => {
    const { store, touched } = countedStore()
    const throttled = throttleTouch(store, { now: () => 0, maxTracked: 2 })
    for (const sid of ['a', 'b', 'c', 'a']) throttled.touch(sid, sess(), () => {})
    expect(touched).toEqual(['a', 'b', 'c', 'a'])
  })
})
