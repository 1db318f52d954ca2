// The session and the person it names, read in one statement. Every API request reads its session from the store and
// then, through passport, its person from app_user: two round trips to PostgreSQL before the route does anything. Here
// the store's `get` reads both at once and leaves the person on the request; passport's `deserializeUser` takes it from
// there (`joinedSessionUser`) and asks app_user itself only when it is not there (a store that was not wrapped, or a
// session whose person changed since). The person is as fresh as with two statements: read in the same request.
import type { Request, RequestHandler } from 'express'
import type { SessionData, Store } from 'express-session'
import type { Pool } from 'pg'
import type { SessionUser } from '@shared/types/api'
import { SESSION_USER_COLUMNS, toSessionUser, type SessionUserRow } from '../services/user.service'

/** What the store read with a session: the person id it names and the person, null when gone or deactivated. */
interface Joined {
  id: string
  user: SessionUser | null
}
const joined = new WeakMap<Request, Joined>()

const UUID = '^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$'
/** Whether a session's person id is one at all (passport keeps whatever serializeUser gave it). */
const UUID_PATTERN = new RegExp(UUID)
export const isPersonId = (id: unknown): id is string => typeof id === 'string' && UUID_PATTERN.test(id)
// The person id passport keeps in the session, as a uuid when it is one (a cast of anything else would fail the read).
const PERSON_ID = `CASE WHEN s.sess -> 'passport' ->> 'user' ~ '${UUID}' THEN (s.sess -> 'passport' ->> 'user')::uuid END`
const SESSION_WITH_USER = `
  SELECT s.sess, ${SESSION_USER_COLUMNS}
    FROM session s
    LEFT JOIN (app_user u JOIN organization o ON o.id = u.organization_id) ON u.id = ${PERSON_ID} AND u.active
   WHERE s.sid = $1 AND s.expire >= now()`

/**
 * Wraps express-session's middleware and its store (connect-pg-simple's, on `pool`): the store's `get` reads the session
 * and its person in one statement.
 * express-session calls `get` synchronously inside its middleware, so the request being served is known there; were it
 * ever called otherwise, the person is simply not left and passport asks for it.
 */
export function sessionWithUser(store: Store, pool: Pool, middleware: RequestHandler): RequestHandler {
  // connect-pg-simple's store on `pool`, its table the documented one named `session`; its own get is replaced.
  let serving: Request | null = null
  store.get = (sid: string, callback: (err: unknown, session?: SessionData | null) => void) => {
    const req = serving
    // A named statement: PostgreSQL plans it once per connection instead of on every request.
    // The callback runs on its own tick, outside the promise: what it throws is not swallowed as a rejection.
    pool.query({ name: 'startproof-session-with-user', text: SESSION_WITH_USER, values: [sid] }).then(
      ({ rows: [row] }) => process.nextTick(read, null, row),
      (err: Error) => process.nextTick(read, err),
    )
    function read(err: Error | null, row?: Record<string, unknown>) {
      if (err) return callback(err)
      if (!row) return callback(null, null)
      let sess: SessionData & { passport?: { user?: unknown } }
      try {
        sess = typeof row.sess === 'string' ? JSON.parse(row.sess) : (row.sess as SessionData)
      } catch {
        return store.destroy(sid, (e) => callback(e ?? null, null))
      }
      const id = sess.passport?.user
      if (req && isPersonId(id)) {
        // The person's columns are null when the session names nobody active (the LEFT JOIN found no one).
        joined.set(req, { id, user: row.id ? toSessionUser(row as unknown as SessionUserRow) : null })
      }
      callback(null, sess)
    }
  }
  return (req, res, next) => {
    serving = req
    try {
      middleware(req, res, next)
    } finally {
      serving = null
    }
  }
}

/** The person the session store read with this request's session, if it read the one named `id`; else undefined. */
export function joinedSessionUser(req: Request, id: string): SessionUser | null | undefined {
  const j = joined.get(req)
  if (!j || j.id !== id) return undefined
  joined.delete(req)
  return j.user
}
