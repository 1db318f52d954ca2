/** The four roles of the product (README.md, "What each role can do"), in the order screens list them. */
export const ROLES = ['admin', 'technician', 'owner_rep', 'contractor'] as const
export type Role = (typeof ROLES)[number]

export const ROLE_LABELS: Record<Role, string> = {
  admin: 'Administrator',
  technician: 'Commissioning technician',
  owner_rep: "Owner's representative",
  contractor: 'Contractor (closeout)',
}

export function isRole(value: unknown): value is Role {
  return typeof value === 'string' && (ROLES as readonly string[]).includes(value)
}
