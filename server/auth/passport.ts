import { Passport } from 'passport'
import { Strategy as LocalStrategy } from 'passport-local'
import { AppError } from '../errors/app-error'
import type { UserService } from '../services/user.service'

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
  passport.deserializeUser((id: string, done) => {
    users
      .sessionUser(id)
      .then((user) => done(null, user ?? false))
      .catch(done)
  })
  return passport
}
