import * as yup from 'yup'

export const PASSWORD_MIN_LENGTH = 10

const email = yup
  .string()
  .label('Email')
  .trim()
  .lowercase()
  .required('Email is required')
  .email('Email must be a valid address')
  .max(254)

const newPassword = yup
  .string()
  .label('Password')
  .required('Password is required')
  .min(PASSWORD_MIN_LENGTH, `Password must be at least ${PASSWORD_MIN_LENGTH} characters`)
  .max(200, 'Password must be at most 200 characters')

/** Sign-in form and `POST /api/session` body. */
export const signInSchema = yup
  .object({
    email,
    password: yup.string().required('Password is required').max(200),
  })
  .noUnknown()
export type SignInInput = yup.InferType<typeof signInSchema>

/** Password change form and `PUT /api/account/password` body. */
export const passwordChangeSchema = yup
  .object({
    currentPassword: yup.string().required('Current password is required').max(200),
    newPassword: yup
      .string()
      .required('New password is required')
      .min(PASSWORD_MIN_LENGTH, `New password must be at least ${PASSWORD_MIN_LENGTH} characters`)
      .max(200, 'New password must be at most 200 characters')
      .notOneOf([yup.ref('currentPassword')], 'New password must differ from the current one'),
  })
  .noUnknown()
export type PasswordChangeInput = yup.InferType<typeof passwordChangeSchema>

export { email as emailSchema, newPassword as newPasswordSchema }

/**
 * `GET /api/session` takes one optional parameter: `after=change`, which the client adds when the answer the browser
 * preloaded with the page may be out of date (client/api/index.ts). It changes nothing on the server; any other
 * parameter is refused.
 */
export const sessionQuerySchema = yup
  .object({ after: yup.string().strict().oneOf(['change'], 'after may only be "change"').optional() })
  .noUnknown(({ unknown }) => `Unknown parameter: ${unknown}`)
  .strict()
