import 'reflect-metadata'
import { DataSource } from 'typeorm'
import { entities } from '../entities'
import { migrations } from '../migrations'

/** One DataSource for the app, the CLI scripts and the tests; never `synchronize`. */
export function createDataSource(databaseUrl: string, options: { poolSize?: number; applicationName?: string } = {}): DataSource {
  return new DataSource({
    type: 'postgres',
    url: databaseUrl,
    entities,
    migrations,
    synchronize: false,
    migrationsRun: false,
    // The migrations make the schema (ids come from gen_random_uuid(), built in); the application role may not create
    // extensions, and the owner should not get one it never asked for.
    installExtensions: false,
    logging: ['error', 'warn'],
    poolSize: options.poolSize ?? 10,
    extra: {
      connectionTimeoutMillis: 5000,
      idleTimeoutMillis: 30000,
      application_name: options.applicationName ?? 'startproof',
    },
  })
}
