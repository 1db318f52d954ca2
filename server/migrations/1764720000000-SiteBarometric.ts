import type { MigrationInterface, QueryRunner } from 'typeorm'

/**
 * The site's elevation and barometric pressure, for converting gauge and vacuum readings to absolute: a stated
 * pressure wins, else the standard atmosphere at the elevation, else sea level (shared/engineering/atmosphere.ts).
 * The same ranges as the API refuses: 60–110 kPa, −500…5000 m.
 */
export class SiteBarometric1764720000000 implements MigrationInterface {
  name = 'SiteBarometric1764720000000'

  async up(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE project ADD COLUMN site_elevation_m double precision CHECK (site_elevation_m BETWEEN -500 AND 5000)`)
    await q.query(`ALTER TABLE project ADD COLUMN barometric_kpa double precision CHECK (barometric_kpa BETWEEN 60 AND 110)`)
  }

  async down(q: QueryRunner): Promise<void> {
    await q.query(`ALTER TABLE project DROP COLUMN barometric_kpa`)
    await q.query(`ALTER TABLE project DROP COLUMN site_elevation_m`)
  }
}
