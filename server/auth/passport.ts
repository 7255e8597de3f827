/**
 * passport-local sign-in by e-mail and password. Repeated failures lock the account for a while
 * (LOCK_AFTER_FAILURES, LOCK_MINUTES); the rate limiter in routes/auth.ts throttles per address on top of that.
 */
import passport from 'passport'
import { Strategy as LocalStrategy } from 'passport-local'
import { User } from '../models'
import { verifyPassword } from './passwords'
import { loadSessionUser, sessionUserFor } from './sessionUser'

export const LOCK_AFTER_FAILURES = 10
export const LOCK_MINUTES = 15

/**
 * The reason a sign-in failed, for a clear message (never tells whether the e-mail exists). 'locked-now' is the
 * failure that locked the account: the sign-in route answers it like 'locked' and e-mails an unlock link.
 */
export type SignInFailure = 'bad-credentials' | 'locked' | 'locked-now'

export function configurePassport(): passport.PassportStatic {
  passport.use(
    new LocalStrategy({ usernameField: 'email', passwordField: 'password' }, (email, password, done) => {
      authenticate(email, password).then(
        (result) => (typeof result === 'string' ? done(null, false, { message: result }) : done(null, result)),
        (err) => done(err),
      )
    }),
  )
  passport.serializeUser((user, done) => done(null, user.id))
  passport.deserializeUser((id: number, done) => {
    sessionUserFor(id).then((user) => done(null, user ?? false), done)
  })
  return passport
}

async function authenticate(email: string, password: string) {
  const user = await User.findOne({ where: { email: email.trim().toLowerCase() } })
  if (!user || !user.active) {
    await verifyPassword(password, null) // keep timing similar for unknown accounts
    return 'bad-credentials' as const
  }
  if (user.lockedUntil && user.lockedUntil > new Date()) return 'locked' as const
  if (!(await verifyPassword(password, user.passwordHash))) {
    const failedLogins = user.failedLogins + 1
    const lockedUntil = failedLogins >= LOCK_AFTER_FAILURES ? new Date(Date.now() + LOCK_MINUTES * 60_000) : null
    await user.update({ failedLogins: lockedUntil ? 0 : failedLogins, lockedUntil })
    return lockedUntil ? ('locked-now' as const) : ('bad-credentials' as const)
  }
  if (user.failedLogins || user.lockedUntil) await user.update({ failedLogins: 0, lockedUntil: null })
  return (await loadSessionUser(user.id))!
}
