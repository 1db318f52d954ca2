/** SQLSTATE classes and socket codes that mean "the database cannot be reached", not "the query is wrong". */
const UNAVAILABLE_SQLSTATES = new Set(['57P01', '57P02', '57P03', '08000', '08001', '08003', '08004', '08006', '53300'])
const UNAVAILABLE_SOCKET_CODES = new Set(['ECONNREFUSED', 'ECONNRESET', 'ETIMEDOUT', 'EPIPE', 'ENOTFOUND', 'EHOSTUNREACH'])
const UNAVAILABLE_MESSAGES = [/connection terminated/i, /timeout exceeded when trying to connect/i, /Connection terminated unexpectedly/i, /the database system is (starting up|shutting down)/i, /Client has encountered a connection error/i]

/** True when an error (possibly wrapped by TypeORM or express-session) means PostgreSQL is unreachable. */
export function isDatabaseUnavailable(err: unknown, depth = 0): boolean {
  if (!err || typeof err !== 'object' || depth > 4) return false
  const e = err as { code?: unknown; message?: unknown; driverError?: unknown; cause?: unknown; errors?: unknown }
  if (typeof e.code === 'string' && (UNAVAILABLE_SQLSTATES.has(e.code) || UNAVAILABLE_SOCKET_CODES.has(e.code))) return true
  if (typeof e.message === 'string' && UNAVAILABLE_MESSAGES.some((re) => re.test(e.message as string))) return true
  if (Array.isArray(e.errors) && e.errors.some((inner) => isDatabaseUnavailable(inner, depth + 1))) return true
  return isDatabaseUnavailable(e.driverError, depth + 1) || isDatabaseUnavailable(e.cause, depth + 1)
}
