import PgBoss from 'pg-boss'
import type { ReportJobs } from '../services/report.service'

/** What a worker does with a report job, and the sweep that finds reports without one. */
export interface ReportWork {
  process(reportId: string): Promise<unknown>
  reconcile(): Promise<{ created: number; pending: string[] }>
}

export const QUEUE = 'report-render'
/** The queue's settings; the migrate step (server/db/migrate.ts) creates the queue with them as the database owner. */
export const QUEUE_OPTIONS = { retryLimit: 2, retryDelay: 5, retryBackoff: true, expireInSeconds: 300 }

/**
 * Report rendering as a job queue in PostgreSQL (pg-boss): any number of app servers enqueue, any number of workers
 * take jobs, each worker renders `concurrency` at a time with its own small browser pool, and a job that fails is retried.
 */
export class ReportQueue implements ReportJobs {
  private boss: PgBoss | null = null
  private sweep: NodeJS.Timeout | null = null

  constructor(
    private readonly databaseUrl: string,
    private readonly options: { work?: boolean; concurrency?: number; sweepSeconds?: number } = {},
  ) {}

  /** A report someone has just accepted goes before the backlog taken up at start (e.g. a first start's demo archive). */
  async enqueue(reportId: string, options: { backlog?: boolean } = {}): Promise<void> {
    if (!this.boss) return
    await this.boss.send(QUEUE, { reportId }, { singletonKey: reportId, priority: options.backlog ? 0 : 1 })
  }

  async start(reports: ReportWork): Promise<void> {
    // The application role may not run DDL: pg-boss's schema and this queue's partition are made by the migrate step,
    // so pg-boss only checks its schema version here, and no cron (whose queue it would create) is used.
    const boss = new PgBoss({ connectionString: this.databaseUrl, schema: 'pgboss', application_name: 'startproof-jobs', max: 3, migrate: false, schedule: false })
    boss.on('error', (err: Error) => console.error('report queue:', err.message))
    await boss.start()
    this.boss = boss
    if (this.options.work !== false) {
      // pg-boss 10 runs one job at a time per `work()` call; one call per page the browser pool can render at once.
      for (let i = 0; i < Math.max(1, this.options.concurrency ?? 1); i++) {
        await boss.work<{ reportId: string }>(QUEUE, { batchSize: 1, pollingIntervalSeconds: 1 }, async ([job]) => {
          await reports.process(job.data.reportId)
        })
      }
    }
    // Accepted runs without a report, and pending reports whose job was lost or whose render died, are taken up now and
    // then every few minutes (a report's claim keeps two workers from rendering it at once).
    const runSweep = async () => {
      try {
        const { created, pending } = await reports.reconcile()
        if (created) console.log(`report sweep: created ${created} missing report${created === 1 ? '' : 's'}`)
        for (const id of pending) await this.enqueue(id, { backlog: true })
      } catch (err) {
        console.error('report sweep:', (err as Error).message)
      }
    }
    await runSweep()
    this.sweep = setInterval(() => void runSweep(), (this.options.sweepSeconds ?? 120) * 1000)
    this.sweep.unref()
  }

  async stop(): Promise<void> {
    if (this.sweep) clearInterval(this.sweep)
    this.sweep = null
    await this.boss?.stop({ graceful: true, timeout: 10_000 })
    this.boss = null
  }
}
