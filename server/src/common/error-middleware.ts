import type { ErrorRequestHandler, RequestHandler } from 'express';
import type { ProblemDetails } from '@emberline/shared';
import {
  NotFoundError as OrmNotFoundError,
  UniqueConstraintViolationException,
} from '@mikro-orm/core';
import { AppError, ValidationError } from './errors';

/** Maps typed errors to problem details (RFC 9457); anything else is logged and answered 500. */
export function errorMiddleware(
  log: (message: string, error: unknown) => void,
): ErrorRequestHandler {
  return (error: unknown, _request, response, next) => {
    if (response.headersSent) {
      next(error);
      return;
    }
    let problem: ProblemDetails;
    if (error instanceof AppError) {
      problem = {
        type: error.type,
        title: error.title,
        status: error.status,
        detail: error.message,
      };
      if (error instanceof ValidationError) problem.errors = error.errors;
    } else if (error instanceof OrmNotFoundError) {
      // A lookup that bypassed the configured handler: still a 404, without the ORM's message.
      problem = {
        type: 'about:blank',
        title: 'Not found',
        status: 404,
        detail: 'The record was not found.',
      };
    } else if (error instanceof UniqueConstraintViolationException) {
      problem = {
        type: 'about:blank',
        title: 'Conflict',
        status: 409,
        detail: 'A record with that value exists already.',
      };
    } else if (isBodyParserError(error)) {
      problem = {
        type: 'about:blank',
        title: 'Invalid request',
        status: error.status,
        detail: 'The request body could not be read.',
      };
    } else {
      log('unexpected error', error);
      problem = {
        type: 'about:blank',
        title: 'Internal error',
        status: 500,
        detail: 'Something went wrong on the server; it has been logged.',
      };
    }
    response.status(problem.status).type('application/problem+json').json(problem);
  };
}

function isBodyParserError(error: unknown): error is { status: number; type: string } {
  return (
    typeof error === 'object' &&
    error !== null &&
    'type' in error &&
    typeof (error as { type: unknown }).type === 'string' &&
    'status' in error &&
    typeof (error as { status: unknown }).status === 'number' &&
    (error as { status: number }).status < 500
  );
}

export const notFoundHandler: RequestHandler = (_request, response) => {
  const problem: ProblemDetails = {
    type: 'about:blank',
    title: 'Not found',
    status: 404,
    detail: 'No such API route.',
  };
  response.status(404).type('application/problem+json').json(problem);
};
