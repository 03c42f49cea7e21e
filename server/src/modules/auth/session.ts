import connectPgSimple from 'connect-pg-simple';
import session from 'express-session';
import type { Request, RequestHandler, Response } from 'express';
import type { MikroORM } from '@mikro-orm/postgresql';
import type { Pool } from 'pg';
import type { AppConfig } from '../../config';
import { issueCsrfToken } from '../../common/csrf';
import { loadSignedInUser } from '../users/user.service';

export const sessionCookieName = 'emberline.sid';

/** Sessions in PostgreSQL (several server processes share them), HttpOnly SameSite cookies. */
export function sessionMiddleware(config: AppConfig, pool: Pool): RequestHandler {
  const PgStore = connectPgSimple(session);
  return session({
    name: sessionCookieName,
    secret: config.sessionSecret,
    store: new PgStore({
      pool,
      tableName: 'http_session',
      createTableIfMissing: false,
      pruneSessionInterval: 600,
    }),
    resave: false,
    saveUninitialized: false,
    // Idle timeout: every request pushes the expiry forward by the idle window.
    rolling: true,
    cookie: {
      httpOnly: true,
      sameSite: 'lax',
      secure: config.isCookieSecure,
      maxAge: config.sessionIdleTimeoutMs,
    },
  });
}

/** Puts the signed-in user on the request; ends sessions past their absolute lifetime. */
export function currentUserMiddleware(orm: MikroORM, config: AppConfig): RequestHandler {
  return async (request, _response, next) => {
    const { userId, signedInAt, signInMethod } = request.session ?? {};
    if (!userId || !signedInAt || !signInMethod) {
      next();
      return;
    }
    if (Date.now() - signedInAt > config.sessionAbsoluteLifetimeMs) {
      await destroySession(request);
      next();
      return;
    }
    const user = await loadSignedInUser(orm.em, userId, signInMethod);
    if (!user) await destroySession(request);
    else request.currentUser = user;
    next();
  };
}

/** A new session id at every sign-in (no fixation), then the user and a fresh CSRF token. */
export async function establishSession(
  request: Request,
  response: Response,
  config: AppConfig,
  userId: string,
  method: 'local' | 'saml',
): Promise<void> {
  await new Promise<void>((resolve, reject) =>
    request.session.regenerate((error: unknown) => (error ? reject(error) : resolve())),
  );
  request.session.userId = userId;
  request.session.signInMethod = method;
  request.session.signedInAt = Date.now();
  await new Promise<void>((resolve, reject) =>
    request.session.save((error: unknown) => (error ? reject(error) : resolve())),
  );
  issueCsrfToken(config.sessionSecret, request, response, config.isCookieSecure);
}

export function destroySession(request: Request): Promise<void> {
  return new Promise<void>((resolve, reject) =>
    request.session.destroy((error: unknown) => (error ? reject(error) : resolve())),
  );
}
