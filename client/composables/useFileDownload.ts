import { computed, ref } from 'vue'
import { ApiError, saveFile, type DownloadedFile } from '@/api/http'
import { formatBytes } from '@/api/archive'

export type DownloadState = 'idle' | 'pending' | 'done' | 'failed'

/**
 * One download at a time with its state in words: waiting for the server, bytes received so far, saved (name and size)
 * or why it failed. `start` takes a function that streams the file and reports progress.
 */
export function useFileDownload() {
  const state = ref<DownloadState>('idle')
  const received = ref(0)
  const total = ref<number | null>(null)
  const error = ref<string | null>(null)
  const saved = ref<{ fileName: string; sizeBytes: number } | null>(null)
  const label = ref('')

  async function start(what: string, fetchFile: (onProgress: (received: number, total: number | null) => void) => Promise<DownloadedFile>) {
    if (state.value === 'pending') return
    state.value = 'pending'
    label.value = what
    received.value = 0
    total.value = null
    error.value = null
    saved.value = null
    try {
      const file = await fetchFile((r, t) => {
        received.value = r
        total.value = t
      })
      saveFile(file)
      saved.value = { fileName: file.fileName, sizeBytes: file.sizeBytes }
      state.value = 'done'
    } catch (err) {
      error.value = err instanceof ApiError || err instanceof Error ? err.message : String(err)
      state.value = 'failed'
    }
  }

  const percent = computed(() => (total.value ? Math.min(100, Math.round((received.value / total.value) * 100)) : null))
  const progressText = computed(() => {
    if (state.value === 'pending') {
      if (!received.value) return `${label.value}: the server is putting the package together…`
      return `${label.value}: ${formatBytes(received.value)}${total.value ? ` of ${formatBytes(total.value)}` : ''} received…`
    }
    if (state.value === 'done' && saved.value) return `${label.value}: saved ${saved.value.fileName} (${formatBytes(saved.value.sizeBytes)}).`
    if (state.value === 'failed') return `${label.value} failed: ${error.value}`
    return ''
  })

  function dismiss() {
    if (state.value !== 'pending') state.value = 'idle'
  }

  return { state, received, total, percent, error, saved, progressText, start, dismiss }
}
