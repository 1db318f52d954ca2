import { describe, expect, it } from 'vitest'
import { retryAfterMs } from '@/api/http'

describe('retryAfterMs', () => {
  it('reads delay-seconds and HTTP dates (RFC 9110 §10.2.3), and nothing else', () => {
    expect(retryAfterMs('5')).toBe(5000)
    expect(retryAfterMs(' 120 ')).toBe(120_000)
    const now = Date.parse('2026-12-03T10:00:00Z')
    expect(retryAfterMs('Thu, 03 Dec 2026 10:00:30 GMT', now)).toBe(30_000)
    expect(retryAfterMs('Thu, 03 Dec 2026 09:59:00 GMT', now)).toBe(0)
    expect(retryAfterMs(null)).toBeNull()
    expect(retryAfterMs('soon')).toBeNull()
  })
})
