import type { ProjectMemberSummary, ProjectSummary, SessionUser, UserSummary } from '@shared/types/api'
import type { PasswordChangeInput, SignInInput } from '@shared/schemas/auth'
import type { UserCreateInput, UserUpdateInput } from '@shared/schemas/user'
import { http } from './http'

export { ApiError } from './http'

export const sessionApi = {
  me: () => http.get<{ user: SessionUser }>('/session').then((r) => r.user),
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
  members: (id: string) => http.get<{ members: ProjectMemberSummary[] }>(`/projects/${id}/members`).then((r) => r.members),
}
