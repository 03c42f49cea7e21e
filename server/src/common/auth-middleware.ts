import type { RequestHandler, Request } from 'express';
import type { Role } from '@emberline/shared';
import { ForbiddenError, UnauthenticatedError } from './errors';
import type { Actor, SignedInUser } from './request-context';

/** The signed-in user or a 401. */
export function signedInUser(request: Request): SignedInUser {
  const user = request.currentUser;
  if (!user) throw new UnauthenticatedError();
  return user;
}

export function actorOf(request: Request): Actor {
  return {
    id: request.currentUser?.id ?? null,
    email: request.currentUser?.email ?? null,
    ip: request.ip ?? null,
  };
}

/** 401 without a session; 403 while a required second factor is not set up. */
export const requireSignIn: RequestHandler = (request, _response, next) => {
  const user = signedInUser(request);
  if (user.mustEnrolTotp) {
    throw new ForbiddenError(
      'Your role requires a second factor: set up an authenticator app first.',
    );
  }
  next();
};

/** 401 without a session, 403 without one of the roles. */
export function requireRole(...allowed: Role[]): RequestHandler {
  return (request, _response, next) => {
    const user = signedInUser(request);
    if (user.mustEnrolTotp) {
      throw new ForbiddenError(
        'Your role requires a second factor: set up an authenticator app first.',
      );
    }
    if (!user.roles.some((role) => allowed.includes(role))) throw new ForbiddenError();
    next();
  };
}

export function hasRole(user: SignedInUser, ...allowed: Role[]): boolean {
  return user.roles.some((role) => allowed.includes(role));
}
