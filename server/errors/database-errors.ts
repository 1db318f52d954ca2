/** SQLSTATE classes and socket codes that mean "the database cannot be reached", not "the query is wrong". */
const UNAVAILABLE_SQLSTATES = new Set(['57P01', '57P02', '57P03', '08000', '08001', '08003', '08004', '08006', '53300'])
const UNAVAILABLE_SOCKET_CODES = new Set(['ECONNREFUSED', 'ECONNRESET', 'ETIMEDOUT', 'EPIPE', 'ENOTFOUND', 'EHOSTUNREACH'])
const UNAVAILABLE_MESSAGES = [/connection terminated/i, /Connection terminated unexpectedly/i, /the database system is (starting up|shutting down)/i, /Client has encountered a connection error/i]

/** True when an error (possibly wrapped by TypeORM or express-session) means PostgreSQL is unreachable. */
export function isDatabaseUnavailable(err: unknown, depth = 0): boolean {
  if (!err || typeof err !== 'object' || depth > 4) return false
  const e = err as { code?: unknown; message?: unknown; driverError?: unknown; cause?: unknown; errors?: unknown }
  if (typeof e.code === 'string' && (UNAVAILABLE_SQLSTATES.has(e.code) || UNAVAILABLE_SOCKET_CODES.has(e.code))) return true
  if (typeof e.message === 'string' && UNAVAILABLE_MESSAGES.some((re) => re.test(e.message as string))) return true
  if (Array.isArray(e.errors) && e.errors.some((inner) => isDatabaseUnavailable(inner, depth + 1))) return true
  return isDatabaseUnavailable(e.driverError, depth + 1) || isDatabaseUnavailable(e.cause, depth + 1)
}

/**
 * True when PostgreSQL is up but this process is overloaded: no pool connection came free in DB_POOL_WAIT_MS, or a
 * statement ran past DB_STATEMENT_TIMEOUT_MS (SQLSTATE 57014) or sat in an idle transaction (25P03). Answered 503
 * "busy" with Retry-After, so clients come back later instead of piling on.
 */
export function isOverloaded(err: unknown, depth = 0): boolean {
  if (!err || typeof err !== 'object' || depth > 4) return false
  const e = err as { code?: unknown; message?: unknown; driverError?: unknown; cause?: unknown }
  if (e.code === '57014' || e.code === '25P03') return true
  if (typeof e.message === 'string' && /timeout exceeded when trying to connect/i.test(e.message)) return true
  return isOverloaded(e.driverError, depth + 1) || isOverloaded(e.cause, depth + 1)
}

/** True when a statement broke a unique constraint (SQLSTATE 23505): for a save, a change id applied meanwhile. */
export function isUniqueViolation(err: unknown): boolean {
  if (!err || typeof err !== 'object') return false
  const e = err as { code?: unknown; driverError?: unknown }
  return e.code === '23505' || isUniqueViolation(e.driverError)
}
