import type { ApiErrorBody } from '@shared/types/api'

/** An API answer other than 2xx, or no answer at all (`status` 0), in words for the person using the app. */
export class ApiError extends Error {
  constructor(
    readonly status: number,
    readonly code: string,
    message: string,
    readonly fields: Record<string, string> = {},
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
    const err = (data as { error?: ApiErrorBody } | undefined)?.error
    if (res.status === 401 && err?.code === 'not_signed_in' && url !== '/session') unauthenticatedHandler?.(url)
    throw new ApiError(res.status, err?.code ?? 'http_' + res.status, err?.message ?? `The server answered ${res.status} ${res.statusText}`, err?.fields)
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
