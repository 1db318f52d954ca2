import type { Options, Store, IncrementResponse } from 'express-rate-limit'
import type { DataSource } from 'typeorm'

/**
 * express-rate-limit store in PostgreSQL, so the limit holds across any number of app servers
 * (the memory store would give each server its own count). One row per key and window.
 */
export class PostgresRateLimitStore implements Store {
  localKeys = false
  prefix: string
  private windowMs = 60_000

  constructor(private readonly db: DataSource, prefix = 'rl:') {
    this.prefix = prefix
  }

  init(options: Options): void {
    this.windowMs = options.windowMs
  }

  async increment(key: string): Promise<IncrementResponse> {
    const rows: { hits: number; reset_at: Date }[] = await this.db.query(
      `INSERT INTO rate_limit (key, hits, reset_at) VALUES ($1, 1, now() + $2 * interval '1 millisecond')
       ON CONFLICT (key) DO UPDATE SET
         hits = CASE WHEN rate_limit.reset_at <= now() THEN 1 ELSE rate_limit.hits + 1 END,
         reset_at = CASE WHEN rate_limit.reset_at <= now() THEN EXCLUDED.reset_at ELSE rate_limit.reset_at END
       RETURNING hits, reset_at`,
      [this.prefix + key, this.windowMs],
    )
    return { totalHits: Number(rows[0].hits), resetTime: new Date(rows[0].reset_at) }
  }

  async decrement(key: string): Promise<void> {
    await this.db.query(`UPDATE rate_limit SET hits = greatest(hits - 1, 0) WHERE key = $1`, [this.prefix + key])
  }

  async resetKey(key: string): Promise<void> {
    await this.db.query(`DELETE FROM rate_limit WHERE key = $1`, [this.prefix + key])
  }
}
