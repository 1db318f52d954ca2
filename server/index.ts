import type { Server } from 'node:http'
import { ConfigError, loadConfig, type Config } from './config'
import { createApp } from './app'
import { createDataSource, createSessionPool, requestPoolOptions } from './db/data-source'
import { migrateDatabase, migrationTarget } from './db/migrate'
import { ensureStarterLibrary } from './services/starter-library'
import { createAppServices } from './services'

export interface RunningServer {
  server: Server
  url: string
  close(): Promise<void>
}

/** Runs pending migrations as the owner, connects to PostgreSQL as the application and listens; resolves once it accepts requests. */
export async function startServer(config: Config): Promise<RunningServer> {
  const db = createDataSource(config.DATABASE_URL, requestPoolOptions(config))
  try {
    await db.initialize()
  } catch (err) {
    const url = new URL(config.DATABASE_URL)
    url.password = url.password ? '***' : ''
    throw new Error(`Cannot connect to the database at DATABASE_URL=${url.toString()}: ${(err as Error).message}`)
  }
  // Migrations, pg-boss's schema and the application role's grants, as the owner (MIGRATION_DATABASE_URL when set).
  await migrateDatabase({ ...migrationTarget(config), log: (line) => console.log(line) }).catch(async (err) => {
    await db.destroy()
    throw err
  })
  const added = await ensureStarterLibrary(db)
  if (added) console.log(`Added ${added} starter template${added === 1 ? '' : 's'} to the library`)
  const services = createAppServices(config, db)
  const sessionPool = createSessionPool(config)
  const app = createApp({ config, db, services, sessionPool })
  const { mail, reports, renderer, queue } = services
  mail.startWorker()
  const seal = await renderer.prepare()
  console.log(`Reports are sealed with "${seal.commonName}" (SHA-256 ${seal.fingerprintSha256.slice(0, 16)}…${seal.created ? ', created now' : ''}${seal.selfSigned ? ', self-signed' : ''})`)
  if (config.NODE_ENV === 'production' && /^https?:\/\/(localhost|127\.|\[::1\])/i.test(config.PUBLIC_URL)) {
    console.warn(`PUBLIC_URL is ${config.PUBLIC_URL}: report QR codes, mail and handover packages will point there; set it to the address owners can reach`)
  }
  await queue.start(reports)
  const server = await new Promise<Server>((resolve, reject) => {
    const s = app.listen(config.PORT, config.HOST, () => resolve(s))
    s.once('error', reject)
  })
  const url = `http://localhost:${config.PORT}`
  return {
    server,
    url,
    async close() {
      server.closeAllConnections()
      await new Promise<void>((resolve) => server.close(() => resolve()))
      await queue.stop()
      await renderer.close()
      await mail.stop()
      await sessionPool.end()
      await db.destroy()
    },
  }
}

async function main() {
  let config: Config
  try {
    config = loadConfig()
  } catch (err) {
    if (err instanceof ConfigError) {
      console.error(err.message)
      process.exit(2)
    }
    throw err
  }
  const running = await startServer(config)
  console.log(`Startproof is serving on ${running.url}`)
  const stop = async (signal: string) => {
    console.log(`${signal}: stopping …`)
    await running.close()
    process.exit(0)
  }
  process.once('SIGINT', () => void stop('SIGINT'))
  process.once('SIGTERM', () => void stop('SIGTERM'))
}

if (import.meta.url === `file://${process.argv[1]}`) {
  main().catch((err) => {
    console.error(err instanceof Error ? err.message : err)
    process.exit(1)
  })
}
