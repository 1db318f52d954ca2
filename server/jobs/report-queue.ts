import PgBoss from 'pg-boss'
import type { ReportService } from '../services/report.service'

const QUEUE = 'report-render'

/**
 * Report rendering as a job queue in PostgreSQL (pg-boss): any number of app servers enqueue, any number of workers
 * take jobs, each worker renders `concurrency` at a time with its own small browser pool, and a job that fails is retried.
 */
export class ReportQueue {
  private boss: PgBoss | null = null

  constructor(
    private readonly databaseUrl: string,
    private readonly reports: ReportService,
    private readonly options: { work?: boolean; concurrency?: number } = {},
  ) {}

  async start(): Promise<void> {
    const boss = new PgBoss({ connectionString: this.databaseUrl, schema: 'pgboss', application_name: 'startproof-jobs', max: 3 })
    boss.on('error', (err: Error) => console.error('report queue:', err.message))
    await boss.start()
    await boss.createQueue(QUEUE, { name: QUEUE, retryLimit: 2, retryDelay: 5, retryBackoff: true, expireInSeconds: 300 })
    this.boss = boss
    // A report someone has just accepted goes before the backlog taken up at start (e.g. a first start's demo archive).
    this.reports.enqueueJob = async (reportId) => {
      await boss.send(QUEUE, { reportId }, { singletonKey: reportId, priority: 1 })
    }
    if (this.options.work !== false) {
      // pg-boss 10 runs one job at a time per `work()` call; one call per page the browser pool can render at once.
      for (let i = 0; i < Math.max(1, this.options.concurrency ?? 1); i++) {
        await boss.work<{ reportId: string }>(QUEUE, { batchSize: 1, pollingIntervalSeconds: 1 }, async ([job]) => {
          await this.reports.process(job.data.reportId)
        })
      }
    }
    // Reports accepted while no queue ran (or whose job was lost) are picked up now.
    for (const id of await this.reports.pendingIds()) await boss.send(QUEUE, { reportId: id }, { singletonKey: id, priority: 0 })
  }

  async stop(): Promise<void> {
    this.reports.enqueueJob = undefined
    await this.boss?.stop({ graceful: true, timeout: 10_000 })
    this.boss = null
  }
}
