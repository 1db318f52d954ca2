import type { Role } from './roles'

/** Body of every API error response: `{ error: ApiErrorBody }`. */
export interface ApiErrorBody {
  code: string
  message: string
  /** Field path → message, for input errors (e.g. `password` → "Password is required"). */
  fields?: Record<string, string>
}

export interface ApiErrorResponse {
  error: ApiErrorBody
}

export interface SessionUser {
  id: string
  email: string
  displayName: string
  role: Role
  organizationName: string
}

export interface UserSummary {
  id: string
  email: string
  displayName: string
  role: Role
  active: boolean
  createdAt: string
  lastSignInAt: string | null
  projectIds: string[]
}

export interface ProjectSummary {
  id: string
  code: string
  name: string
  siteName: string
  siteAddress: string
  timeZone: string
  unitSystem: 'IP' | 'SI'
  memberCount: number
}

export interface ProjectMemberSummary {
  userId: string
  displayName: string
  email: string
  role: Role
  active: boolean
}
