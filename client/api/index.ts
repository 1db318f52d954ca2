import type { EquipmentDetail, EquipmentSummary, ProjectMemberSummary, ProjectSummary, SessionUser, UserSummary } from '@shared/types/api'
import type { DesignChangeOutcome } from '@shared/types/design-change'
import type { ProjectCreateInput, ProjectUpdateInput } from '@shared/schemas/project'
import type { PasswordChangeInput, SignInInput } from '@shared/schemas/auth'
import type { UserCreateInput, UserUpdateInput } from '@shared/schemas/user'
import { http, upload } from './http'

export { ApiError } from './http'

/** Whether this page has asked who is signed in yet (see `sessionApi.me`). */
let sessionAsked = false

export const sessionApi = {
  /**
   * Who is signed in. The server's Link header has the browser ask `/api/session` while index.html loads
   * (server/middleware/client-assets.ts), and only the page's first question takes that answer; every later one, and a
   * first one asked after the sign-in may have changed (`afterChange`: a pending sign-out was just sent), goes under
   * another address, so an answer older than the question is never read.
   */
  me: (afterChange = false) => {
    const preloaded = !afterChange && !sessionAsked
    sessionAsked = true
    return http.get<{ user: SessionUser }>(preloaded ? '/session' : '/session?after=change').then((r) => r.user)
  },
  signIn: (input: SignInInput) => http.post<{ user: SessionUser }>('/session', input).then((r) => r.user),
  signOut: () => http.delete<void>('/session'),
  changePassword: (input: PasswordChangeInput) => http.put<void>('/account/password', input),
}

export const usersApi = {
  list: () => http.get<{ users: UserSummary[] }>('/users').then((r) => r.users),
  create: (input: UserCreateInput) => http.post<{ user: UserSummary }>('/users', input).then((r) => r.user),
  update: (id: string, input: UserUpdateInput) => http.patch<{ user: UserSummary }>(`/users/${id}`, input).then((r) => r.user),
}

export const projectsApi = {
  list: () => http.get<{ projects: ProjectSummary[] }>('/projects').then((r) => r.projects),
  get: (id: string) => http.get<{ project: ProjectSummary }>(`/projects/${id}`).then((r) => r.project),
  create: (input: ProjectCreateInput) => http.post<{ project: ProjectSummary }>('/projects', input).then((r) => r.project),
  /** Resolves the project and what the edit did to its runs; 409 `edit_conflict` and `affects_signed_runs` carry details. */
  update: (id: string, input: ProjectUpdateInput) => http.patch<{ project: ProjectSummary; runs: DesignChangeOutcome }>(`/projects/${id}`, input),
  remove: (id: string) => http.delete<void>(`/projects/${id}`),
  members: (id: string) => http.get<{ members: ProjectMemberSummary[] }>(`/projects/${id}/members`).then((r) => r.members),
  addMember: (id: string, userId: string) => http.put<{ members: ProjectMemberSummary[] }>(`/projects/${id}/members/${userId}`).then((r) => r.members),
  removeMember: (id: string, userId: string) => http.delete<{ members: ProjectMemberSummary[] }>(`/projects/${id}/members/${userId}`).then((r) => r.members),
}

export const equipmentApi = {
  list: (projectId: string) => http.get<{ equipment: EquipmentSummary[] }>(`/projects/${projectId}/equipment`).then((r) => r.equipment),
  create: (projectId: string, input: unknown) => http.post<{ equipment: EquipmentDetail }>(`/projects/${projectId}/equipment`, input).then((r) => r.equipment),
  get: (id: string) => http.get<{ equipment: EquipmentDetail }>(`/equipment/${id}`).then((r) => r.equipment),
  /** Resolves the item and what the edit did to its runs; 409 `edit_conflict` and `affects_signed_runs` carry details. */
  update: (id: string, input: unknown) => http.patch<{ equipment: EquipmentDetail; runs: DesignChangeOutcome }>(`/equipment/${id}`, input),
  remove: (id: string) => http.delete<void>(`/equipment/${id}`),
  photoUrl: (id: string, sha256: string) => `/api/equipment/${id}/nameplate-photo?v=${sha256.slice(0, 12)}`,
  uploadPhoto: (id: string, file: File) => upload<{ equipment: EquipmentDetail }>(`/equipment/${id}/nameplate-photo`, 'photo', file).then((r) => r.equipment),
}
