// The closed-loop client of `npm run bench:save`: each virtual writer sends its next save only when the previous one
// has been answered, as a technician's tablet does, for a fixed time; writers still waiting at the end are awaited and
// counted. One undici pool per target with one keep-alive connection per writer.
import { Pool } from 'undici'

export interface Writer {
  /** Request path of this writer's save. */
  path: string
  headers: Record<string, string>
  /** The JSON body of the next save (it must change something each time). */
  body(): string
  /** Sees every answer, to follow the field's version. */
  onAnswer(status: number, body: string): void
}

export interface LoopResult {
  writers: number
  seconds: number
  ok: number
  /** Answers that were not 2xx. */
  non2xx: number
  /** Saves that got no answer: refused or reset connections, timeouts. */
  network: number
  status5xx: number
  statuses: Map<number, number>
  /** Latency in ms of every answered save (any status). */
  latencies: number[]
  requestBytes: number
  responseBytes: number
  /** A few distinct failures, for the report. */
  samples: string[]
}

export const quantile = (xs: number[], q: number) => {
  if (!xs.length) return NaN
  const s = [...xs].sort((a, b) => a - b)
  return s[Math.min(s.length - 1, Math.max(0, Math.ceil(q * s.length) - 1))]
}

export async function closedLoop(origin: string, writers: Writer[], durationMs: number, timeoutMs: number): Promise<LoopResult> {
  const pool = new Pool(origin, { connections: writers.length, pipelining: 1, keepAliveTimeout: 60_000, headersTimeout: timeoutMs, bodyTimeout: timeoutMs })
  const r: LoopResult = { writers: writers.length, seconds: 0, ok: 0, non2xx: 0, network: 0, status5xx: 0, statuses: new Map(), latencies: [], requestBytes: 0, responseBytes: 0, samples: [] }
  const sample = (s: string) => {
    if (r.samples.length < 5 && !r.samples.includes(s)) r.samples.push(s)
  }
  const start = performance.now()
  const deadline = start + durationMs
  const one = async (w: Writer) => {
    while (performance.now() < deadline) {
      const body = w.body()
      const t0 = performance.now()
      try {
        const res = await pool.request({ origin, path: w.path, method: 'PUT', headers: { ...w.headers, 'content-type': 'application/json' }, body })
        const text = await res.body.text()
        r.latencies.push(performance.now() - t0)
        r.requestBytes += Buffer.byteLength(body)
        r.responseBytes += Buffer.byteLength(text)
        r.statuses.set(res.statusCode, (r.statuses.get(res.statusCode) ?? 0) + 1)
        if (res.statusCode >= 200 && res.statusCode < 300) r.ok += 1
        else {
          r.non2xx += 1
          if (res.statusCode >= 500) r.status5xx += 1
          sample(`${res.statusCode} ${text.slice(0, 160)}`)
        }
        w.onAnswer(res.statusCode, text)
      } catch (err) {
        r.network += 1
        sample(`network: ${(err as Error).message}`)
        // A refused connection answers at once; do not spin on it.
        await new Promise((resolve) => setTimeout(resolve, 50))
      }
    }
  }
  await Promise.all(writers.map(one))
  r.seconds = (performance.now() - start) / 1000
  await pool.close()
  return r
}
