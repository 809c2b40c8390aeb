import connectPgSimple from 'connect-pg-simple';
import type { Express } from 'express';
import { rateLimit } from 'express-rate-limit';
import session from 'express-session';
import { Strategy as LocalStrategy } from 'passport-local';
import { signInSchema, type SessionUser } from '../../../shared/schemas/auth';
import type { AppContext } from '../../context';
import { AppError } from '../../http/errors';
import { ApiRouter, SESSION_COOKIE } from '../../http/route';
import { UserEntity } from '../../db/entities';
import { pgPool, pgPoolOf } from '../../db/pool';
import { PgRateLimitStore } from './rate-limit.data';
import { SESSION_ENDED, type SessionEnded } from '../../events';
import type { AuthService } from './auth.service';

/** Sign-in attempts allowed per client address in a window (on top of the per-account lockout). */
export const SIGN_IN_WINDOW_MS = 15 * 60 * 1000;
export const SIGN_IN_MAX_PER_WINDOW = 30;

/** Sessions in PostgreSQL (connect-pg-simple on TypeORM's own pool) and passport-local. */
/** One passport instance per app (ctx.services.passport, not the process-wide default), so two apps in one process never share strategies. */
const passportOf = (ctx: AppContext) => ctx.services.passport;

export function installAuth(app: Express, ctx: AppContext): AuthService {
  const { auth, passport } = ctx.services;
  const PgStore = connectPgSimple(session);
  const pool = pgPool(ctx.ds);
  const store = new PgStore({ pool, tableName: 'session', createTableIfMissing: false, pruneSessionInterval: 15 * 60 });
  ctx.onClose(() => store.close()); // stops the prune timer
  app.use(
    session({
      name: SESSION_COOKIE,
      store,
      secret: ctx.config.sessionSecret,
      resave: false,
      saveUninitialized: false,
      rolling: true,
      cookie: { httpOnly: true, sameSite: 'lax', secure: ctx.config.secureCookies, maxAge: ctx.config.sessionMaxAgeMs },
    }),
  );
  passport.use(
    new LocalStrategy({ usernameField: 'email', passwordField: 'password' }, (email, password, done) => {
      auth.verify(email, password).then(
        (r) => (r.ok ? done(null, r.user) : done(null, false, { message: r.message })),
        (err) => done(err),
      );
    }),
  );
  passport.serializeUser((u, done) => done(null, u.id));
  passport.deserializeUser((id: string, done) => {
    auth.load(id).then((u) => done(null, u ?? false), done);
  });
  app.use(passport.initialize());
  app.use(passport.session());
  return auth;
}

export function authRoutes(ctx: AppContext): ApiRouter {
  const r = new ApiRouter('/api/auth');
  const limiter = rateLimit({
    windowMs: SIGN_IN_WINDOW_MS,
    limit: ctx.config.signInMaxPerWindow ?? SIGN_IN_MAX_PER_WINDOW,
    standardHeaders: 'draft-7',
    legacyHeaders: false,
    // Several API processes (EMBERLOT_WORKERS=elect) count one address's attempts together.
    ...(ctx.config.workers?.mode === 'elect' ? { store: new PgRateLimitStore(() => pgPoolOf(ctx)) } : {}),
    handler: (_req, res) => {
      res.status(429).json({
        error: { code: 'too_many_requests', message: 'Too many sign-in attempts from this address. Wait 15 minutes and try again.' },
      });
    },
  });
  r.router.use('/sign-in', limiter);

  r.post('/sign-in', { access: 'public', body: signInSchema }, ({ req, res, body }) => {
    req.body = body;
    const passport = passportOf(ctx);
    return new Promise((resolve, reject) => {
      passport.authenticate('local', (err: unknown, user: SessionUser | false, info?: { message?: string }) => {
        if (err) return reject(err);
        if (!user) return reject(new AppError('unauthenticated', info?.message ?? 'Wrong e-mail or password.'));
        // passport 0.7 regenerates the session on login (no session fixation).
        req.logIn(user, (e) => {
          if (e) return reject(e);
          // Recorded before answering: a sign-in's audit row landing after the response made the
          // next request's "nothing changed" table counts flaky.
          ctx.audit
            .record({ actor: user, action: 'user.sign-in', entity: 'user', entityId: user.id })
            .then(() => resolve({ user }), reject);
        });
      })(req, res, (e: unknown) => reject(e));
    });
  });

  r.post('/sign-out', { access: 'public' }, ({ req, res }) => {
    const sid = req.sessionID;
    return new Promise<void>((resolve, reject) => {
      req.logout((err) => {
        if (err) return reject(err);
        req.session?.destroy(() => {
          if (sid) ctx.events.emit(SESSION_ENDED, { sid } satisfies SessionEnded); // open streams end now
          res.clearCookie(SESSION_COOKIE, { httpOnly: true, sameSite: 'lax', secure: ctx.config.secureCookies });
          resolve();
        });
      });
    });
  });

  r.get('/me', { access: 'signed-in' }, async ({ user }) => {
    const u = await ctx.ds.getRepository(UserEntity).findOneByOrFail({ id: user.id });
    return { user: { ...user, notifyAlarms: u.notifyAlarms, notifyReadPoints: u.notifyReadPoints, safetyApprover: u.safetyApprover } };
  });
  return r;
}
