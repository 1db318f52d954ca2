import { Passport } from 'passport'
import { Strategy as LocalStrategy } from 'passport-local'
import { AppError } from '../errors/app-error'
import type { UserService } from '../services/user.service'
import type { Request } from 'express'
import { isPersonId, joinedSessionUser } from './session-user'

/** A passport instance of the app's own (not the global one), so every app built in tests is independent. */
export type AppPassport = InstanceType<typeof Passport>

export function createPassport(users: UserService): AppPassport {
  const passport = new Passport()
  passport.use(
    new LocalStrategy({ usernameField: 'email', passwordField: 'password', passReqToCallback: true }, (req, email, password, done) => {
      users
        .authenticate(email, password, req.ip ?? null)
        .then((user) => done(null, user))
        .catch((err) => (err instanceof AppError && err.code === 'invalid_credentials' ? done(null, false, err) : done(err)))
    }),
  )
  passport.serializeUser((user, done) => done(null, user.id))
  passport.deserializeUser((req: Request, id: unknown, done: (err: unknown, user?: Express.User | false) => void) => {
    // A session naming no person id (tampered with, or from an older layout) is no sign-in, and never reaches SQL.
    if (!isPersonId(id)) return done(null, false)
    // Read with the session when the store could (server/auth/session-user.ts): no second statement.
    const known = joinedSessionUser(req, id)
    if (known !== undefined) return done(null, known ?? false)
    users
      .sessionUser(id)
      .then((user) => done(null, user ?? false))
      .catch(done)
  })
  return passport
}
