import type { ArchiveFacets, ArchivePage, CloseoutCategory, CloseoutDocument } from '@shared/types/archive'
import type { ProjectSummary } from '@shared/types/api'
import { download, http, uploadForm, type DownloadedFile } from './http'

/** What `GET /api/archive` takes; empty values are left out of the request. */
export interface ArchiveSearch {
  projectId?: string
  equipmentId?: string
  templateId?: string
  technicianId?: string
  from?: string
  to?: string
  hasFails?: boolean
  hasOpenFindings?: boolean
  q?: string
  sort?: 'newest' | 'oldest'
  limit?: number
  cursor?: string
}

export function archiveSearchParams(search: ArchiveSearch): URLSearchParams {
  const params = new URLSearchParams()
  for (const [key, value] of Object.entries(search)) {
    if (value === undefined || value === null || value === '') continue
    params.set(key, String(value))
  }
  return params
}

export interface CloseoutUpload {
  title: string
  category: CloseoutCategory
  documentDate: string
}

type Progress = (received: number, total: number | null) => void

export const archiveApi = {
  search: (search: ArchiveSearch) => {
    const params = archiveSearchParams(search).toString()
    return http.get<ArchivePage>(`/archive${params ? `?${params}` : ''}`)
  },
  facets: () => http.get<ArchiveFacets>('/archive/facets'),
  /** The handover package of chosen reports or a whole project, streamed as a ZIP. */
  exportPackage: (what: { projectId: string } | { reportNumbers: string[] }, onProgress?: Progress): Promise<DownloadedFile> =>
    download('/archive/export', { method: 'POST', body: what, fallbackName: 'handover-package.zip', onProgress }),
  projectPackage: (projectId: string, onProgress?: Progress): Promise<DownloadedFile> =>
    download(`/projects/${encodeURIComponent(projectId)}/handover.zip`, { fallbackName: 'handover-package.zip', onProgress }),
  projectPackageUrl: (projectId: string) => `/api/projects/${encodeURIComponent(projectId)}/handover.zip`,
}

export const closeoutApi = {
  list: (projectId: string) => http.get<{ documents: CloseoutDocument[] }>(`/projects/${encodeURIComponent(projectId)}/closeout-documents`).then((r) => r.documents),
  attach: (projectId: string, input: CloseoutUpload, file: File) => {
    const form = new FormData()
    form.append('title', input.title)
    form.append('category', input.category)
    form.append('documentDate', input.documentDate)
    form.append('file', file, file.name)
    return uploadForm<{ document: CloseoutDocument }>(`/projects/${encodeURIComponent(projectId)}/closeout-documents`, form).then((r) => r.document)
  },
}

export const projectCloseApi = {
  close: (projectId: string) => http.post<{ project: ProjectSummary }>(`/projects/${encodeURIComponent(projectId)}/close`).then((r) => r.project),
  reopen: (projectId: string) => http.post<{ project: ProjectSummary }>(`/projects/${encodeURIComponent(projectId)}/reopen`).then((r) => r.project),
}

/** Files accepted as closeout documents: the server refuses anything else. */
export const CLOSEOUT_ACCEPT = '.pdf,.jpg,.jpeg,.png,.webp,.docx,.xlsx,application/pdf,image/jpeg,image/png,image/webp,application/vnd.openxmlformats-officedocument.wordprocessingml.document,application/vnd.openxmlformats-officedocument.spreadsheetml.sheet'
const CLOSEOUT_EXTENSIONS = /\.(pdf|jpe?g|png|webp|docx|xlsx)$/i

/** Why a picked file cannot be attached, or null when it may be sent (the server checks again). */
export function closeoutFileProblem(file: File | null): string | null {
  if (!file) return 'Choose the file to attach'
  if (!CLOSEOUT_EXTENSIONS.test(file.name)) return 'Attach a PDF, JPEG, PNG, WebP, Word (.docx) or Excel (.xlsx) file'
  if (file.size === 0) return 'The file is empty'
  return null
}

/** "245 kB", "4.1 MB". */
export function formatBytes(bytes: number): string {
  if (bytes < 1024) return `${bytes} B`
  if (bytes < 1024 * 1024) return `${Math.round(bytes / 1024)} kB`
  return `${(bytes / (1024 * 1024)).toFixed(1)} MB`
}
