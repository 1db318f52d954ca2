// The product for `npm run bench:save`, started as a child process by bench/save.bench.ts so the load client does not
// share its event loop: the real server as `npm run serve` starts it (migrate step as the owner, then the app connected
// as the application role), configured from the environment the parent passes (PORT on HOST=127.0.0.1).
// It reports `{ port }` to its parent over IPC and stops cleanly on SIGTERM, SIGINT or when the parent goes away.
import { loadConfig } from '../../server/config'
import { startServer } from '../../server/index'

async function main() {
  const config = loadConfig()
  const running = await startServer(config)
  let stopping = false
  const stop = async () => {
    if (stopping) return
    stopping = true
    await running.close().catch((err) => console.error(err))
    process.exit(0)
  }
  process.once('SIGTERM', () => void stop())
  process.once('SIGINT', () => void stop())
  process.once('disconnect', () => void stop())
  process.send?.({ port: config.PORT })
}

main().catch((err) => {
  console.error(err instanceof Error ? err.message : err)
  process.exit(1)
})
