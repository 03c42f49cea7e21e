/** Errors the services throw; the error middleware maps each to a status and a safe message. */
export class AppError extends Error {
  constructor(
    readonly status: number,
    readonly title: string,
    message: string,
    readonly type = 'about:blank',
  ) {
    super(message);
  }
}

export class NotFoundError extends AppError {
  constructor(what = 'The record') {
    super(404, 'Not found', `${what} was not found.`);
  }
}

export class ForbiddenError extends AppError {
  constructor(message = 'Your role does not allow this action.', type = 'about:blank') {
    super(403, 'Forbidden', message, type);
  }
}

export class UnauthenticatedError extends AppError {
  constructor(message = 'Sign in first.', type = 'about:blank') {
    super(401, 'Not signed in', message, type);
  }
}

export class ConflictError extends AppError {
  constructor(message: string) {
    super(409, 'Conflict', message);
  }
}

export class ValidationError extends AppError {
  constructor(
    message: string,
    readonly errors: { path: string; message: string }[],
  ) {
    super(400, 'Invalid request', message);
  }
}
