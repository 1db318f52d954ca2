import type { MigrationInterface, QueryRunner } from 'typeorm'

export class RateLimit1764633700000 implements MigrationInterface {
  name = 'RateLimit1764633700000'

  async up(q: QueryRunner): Promise<void> {
    await q.query(`CREATE TABLE rate_limit (key text PRIMARY KEY, hits integer NOT NULL, reset_at timestamptz NOT NULL)`)
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`DROP TABLE rate_limit`)
  }
}
