import type { ApiErrorBody } from '@shared/types/api'

/** An API answer other than 2xx, or no answer at all (`status` 0), in words for the person using the app. */
export class ApiError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly fields: Record<string, string> = {},
    /** The other top-level members of the error answer, e.g. `current` of a 409 `edit_conflict`, `runs` of `affects_signed_runs`. */
    readonly details: Record<string, unknown> = {},
    /** How long the server asked to wait before trying again (`Retry-After` of a 503 or 429), in milliseconds. */
    readonly retryAfterMs: number | null = null,
  ) {
    super(message)
    this.name = 'ApiError'
  }
}

type Method = 'GET' | 'POST' | 'PUT' | 'PATCH' | 'DELETE'

let unauthenticatedHandler: ((url: string) => void) | null = null
/** Called when any call other than the session check answers 401 (the sign-in ended elsewhere or expired). */
export function onUnauthenticated(handler: (url: string) => void) {
  unauthenticatedHandler = handler
}

/** JSON request to `/api…`; resolves the parsed body, or throws ApiError with the server's code and message. */
export async function request<T>(method: Method, url: string, body?: unknown): Promise<T> {
  return send<T>(method, url, {
    headers: { Accept: 'application/json', ...(body !== undefined ? { 'Content-Type': 'application/json' } : {}) },
    body: body !== undefined ? JSON.stringify(body) : undefined,
  })
}

/** Uploads one file as multipart form data (`field` is the form field's name). */
export async function upload<T>(url: string, field: string, file: File, method: 'PUT' | 'POST' = 'PUT'): Promise<T> {
  const form = new FormData()
  form.append(field, file, file.name)
  return send<T>(method, url, { headers: { Accept: 'application/json' }, body: form })
}

/** Sends a whole multipart form (fields and files), e.g. a closeout document with its title, category and date. */
export async function uploadForm<T>(url: string, form: FormData, method: 'PUT' | 'POST' = 'POST'): Promise<T> {
  return send<T>(method, url, { headers: { Accept: 'application/json' }, body: form })
}

/** A file the server streamed, read to the end. */
export interface DownloadedFile {
  blob: Blob
  fileName: string
  sizeBytes: number
}

/** The file name a `Content-Disposition: attachment; filename…` header gives, or `fallback`. */
export function fileNameFrom(disposition: string | null, fallback: string): string {
  if (!disposition) return fallback
  const star = /filename\*\s*=\s*(?:UTF-8'')?([^;]+)/i.exec(disposition)
  if (star) {
    try {
      return decodeURIComponent(star[1].trim().replace(/^"|"$/g, ''))
    } catch {
      // fall through to the plain parameter
    }
  }
  const plain = /filename\s*=\s*("?)([^";]+)\1/i.exec(disposition)
  return plain ? plain[2].trim() : fallback
}

/**
 * Fetches a streamed file (a report PDF, a handover ZIP) chunk by chunk, telling `onProgress` how many bytes have
 * arrived (and the total when the server said it); throws ApiError with the server's words when it refuses.
 */
export async function download(
  url: string,
  init: { method?: Method; body?: unknown; fallbackName: string; onProgress?: (received: number, total: number | null) => void; signal?: AbortSignal },
): Promise<DownloadedFile> {
  let res: Response
  try {
    res = await fetch(`/api${url}`, {
      method: init.method ?? 'GET',
      credentials: 'same-origin',
      headers: init.body !== undefined ? { 'Content-Type': 'application/json' } : {},
      body: init.body !== undefined ? JSON.stringify(init.body) : undefined,
      signal: init.signal,
    })
  } catch (err) {
    if (init.signal?.aborted) throw err
    throw new ApiError(0, 'network', 'The server cannot be reached. Check the connection and try again.')
  }
  if (!res.ok) {
    let body: { error?: ApiErrorBody } | undefined
    try {
      body = (await res.json()) as { error?: ApiErrorBody }
    } catch {
      body = undefined
    }
    const err = body?.error
    if (res.status === 401 && err?.code === 'not_signed_in') unauthenticatedHandler?.(url)
    throw new ApiError(res.status, err?.code ?? 'http_' + res.status, err?.message ?? `The server answered ${res.status} ${res.statusText}`, err?.fields)
  }
  const totalHeader = Number(res.headers.get('Content-Length'))
  const total = Number.isFinite(totalHeader) && totalHeader > 0 ? totalHeader : null
  const type = res.headers.get('Content-Type') ?? 'application/octet-stream'
  const fileName = fileNameFrom(res.headers.get('Content-Disposition'), init.fallbackName)
  const chunks: BlobPart[] = []
  let received = 0
  init.onProgress?.(0, total)
  try {
    const reader = res.body?.getReader()
    if (!reader) {
      const blob = await res.blob()
      init.onProgress?.(blob.size, total)
      return { blob, fileName, sizeBytes: blob.size }
    }
    for (;;) {
      const { done, value } = await reader.read()
      if (done) break
      chunks.push(value as Uint8Array<ArrayBuffer>)
      received += value.byteLength
      init.onProgress?.(received, total)
    }
  } catch (err) {
    if (init.signal?.aborted) throw err
    throw new ApiError(0, 'network', `The download stopped after ${received} bytes; the connection was lost. Try again.`)
  }
  const blob = new Blob(chunks, { type })
  return { blob, fileName, sizeBytes: blob.size }
}

/** Hands a downloaded file to the browser to save, under its own name. */
export function saveFile(file: DownloadedFile) {
  const href = URL.createObjectURL(file.blob)
  const a = document.createElement('a')
  a.href = href
  a.download = file.fileName
  a.rel = 'noopener'
  a.style.display = 'none'
  document.body.appendChild(a)
  a.click()
  a.remove()
  setTimeout(() => URL.revokeObjectURL(href), 60_000)
}

/** `Retry-After` in milliseconds: delay-seconds or an HTTP date (RFC 9110 §10.2.3); null when absent or unreadable. */
export function retryAfterMs(header: string | null, now = Date.now()): number | null {
  if (!header) return null
  const trimmed = header.trim()
  if (/^\d+$/.test(trimmed)) return Number(trimmed) * 1000
  const at = Date.parse(trimmed)
  return Number.isFinite(at) ? Math.max(0, at - now) : null
}

async function send<T>(method: Method, url: string, init: { headers: Record<string, string>; body?: BodyInit }): Promise<T> {
  let res: Response
  try {
    res = await fetch(`/api${url}`, { method, credentials: 'same-origin', ...init })
  } catch {
    throw new ApiError(0, 'network', 'The server cannot be reached. Check the connection and try again; what you typed is kept.')
  }
  if (res.status === 204) return undefined as T
  const text = await res.text()
  let data: unknown = undefined
  try {
    data = text ? JSON.parse(text) : undefined
  } catch {
    data = undefined
  }
  if (!res.ok) {
    const { error: err, ...details } = (data && typeof data === 'object' ? data : {}) as { error?: ApiErrorBody } & Record<string, unknown>
    if (res.status === 401 && err?.code === 'not_signed_in' && url.split('?')[0] !== '/session') unauthenticatedHandler?.(url)
    throw new ApiError(res.status, err?.code ?? 'http_' + res.status, err?.message ?? `The server answered ${res.status} ${res.statusText}`, err?.fields, details, retryAfterMs(res.headers.get('Retry-After')))
  }
  return data as T
}

export const http = {
  get: <T>(url: string) => request<T>('GET', url),
  post: <T>(url: string, body?: unknown) => request<T>('POST', url, body ?? {}),
  put: <T>(url: string, body?: unknown) => request<T>('PUT', url, body ?? {}),
  patch: <T>(url: string, body?: unknown) => request<T>('PATCH', url, body ?? {}),
  delete: <T>(url: string) => request<T>('DELETE', url),
}
