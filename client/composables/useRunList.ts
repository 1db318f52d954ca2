import { onMounted, ref } from 'vue'
import type { RunState, RunSummary } from '@shared/types/run'
import { runsApi, type RunListQuery } from '@/api/runs'
import { useAsyncAction } from './useAsyncAction'

export const RUN_STATE_WORDS: Record<RunState, string> = {
  in_progress: 'In progress',
  returned: 'Returned for changes',
  submitted: 'Submitted for acceptance',
  accepted: 'Accepted',
}

/** "12 of 80 readings" and the share done, for a progress bar. */
export function runProgressText(run: RunSummary): { text: string; pct: number } {
  const { required, answered } = run.progress
  return { text: `${answered} of ${required} readings`, pct: required ? Math.round((answered / required) * 100) : 0 }
}

export function runUpdatedText(run: RunSummary): string {
  return new Date(run.updatedAt).toLocaleString('en-US', { year: 'numeric', month: 'short', day: 'numeric', hour: 'numeric', minute: '2-digit' })
}

/** Runs from `GET /api/runs` (or one equipment item's runs), loaded on mount. */
export function useRunList(load: () => Promise<RunSummary[]>) {
  const runs = ref<RunSummary[]>([])
  const { isLoading, error, run } = useAsyncAction(async () => {
    runs.value = await load()
  })
  onMounted(() => run())
  return { runs, isLoading, error, reload: run }
}

export const myRuns = (query: RunListQuery = {}) => () => runsApi.list({ mine: true, ...query })
