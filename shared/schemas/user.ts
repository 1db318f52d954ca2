import * as yup from 'yup'
import { ROLES, type Role } from '../types/roles'
import { emailSchema, newPasswordSchema } from './auth'

const role = yup
  .mixed<Role>()
  .required('Role is required')
  .oneOf([...ROLES], `Role must be one of ${ROLES.join(', ')}`)

const displayName = yup
  .string()
  .trim()
  .required('Name is required')
  .min(2, 'Name must be at least 2 characters')
  .max(120, 'Name must be at most 120 characters')

/** Admin creates a person: `POST /api/users`. */
export const userCreateSchema = yup
  .object({
    email: emailSchema,
    displayName,
    role,
    password: newPasswordSchema,
  })
  .noUnknown()
export type UserCreateInput = yup.InferType<typeof userCreateSchema>

/** Admin changes a person: `PATCH /api/users/:userId`; every field optional, at least one given. */
export const userUpdateSchema = yup
  .object({
    displayName: displayName.optional().default(undefined),
    role: yup
      .mixed<Role>()
      .oneOf([...ROLES], `Role must be one of ${ROLES.join(', ')}`)
      .optional(),
    active: yup.boolean().strict().optional(),
  })
  .noUnknown()
  .test('not-empty', 'Give at least one of displayName, role, active', (value) =>
    value != null && Object.values(value).some((v) => v !== undefined),
  )
export type UserUpdateInput = yup.InferType<typeof userUpdateSchema>

/** Route parameter holding a UUID (user, project …). */
export const uuidSchema = yup
  .string()
  .required()
  .matches(/^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i, '${path} must be a UUID')
