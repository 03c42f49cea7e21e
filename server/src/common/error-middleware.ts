import type { ErrorRequestHandler, RequestHandler } from 'express';
import type { ProblemDetails } from '@emberline/shared';
import {
  NotFoundError as OrmNotFoundError,
  UniqueConstraintViolationException,
} from '@mikro-orm/core';
import { AppError, ValidationError } from './errors';

/**
 * The problem details (RFC 9457) for any error a handler throws: typed errors keep their status
 * and message, anything unexpected is logged and answered as a 500 without its details. One
 * function for the HTTP API and for every Socket.IO acknowledgement.
 */
export function problemFrom(
  error: unknown,
  log: (message: string, error: unknown) => void,
): ProblemDetails {
  if (error instanceof AppError) {
    const problem: ProblemDetails = {
      type: error.type,
      title: error.title,
      status: error.status,
      detail: error.message,
    };
    if (error instanceof ValidationError) problem.errors = error.errors;
    return problem;
  }
  if (error instanceof OrmNotFoundError) {
    // A lookup that bypassed the configured handler: still a 404, without the ORM's message.
    return {
      type: 'about:blank',
      title: 'Not found',
      status: 404,
      detail: 'The record was not found.',
    };
  }
  if (error instanceof UniqueConstraintViolationException) {
    return {
      type: 'about:blank',
      title: 'Conflict',
      status: 409,
      detail: 'A record with that value exists already.',
    };
  }
  if (isBodyParserError(error)) {
    return {
      type: 'about:blank',
      title: 'Invalid request',
      status: error.status,
      detail: 'The request body could not be read.',
    };
  }
  log('unexpected error', error);
  return {
    type: 'about:blank',
    title: 'Internal error',
    status: 500,
    detail: 'Something went wrong on the server; it has been logged.',
  };
}

/** Maps typed errors to problem details (RFC 9457); anything else is logged and answered 500. */
export function errorMiddleware(
  log: (message: string, error: unknown) => void,
): ErrorRequestHandler {
  return (error: unknown, _request, response, next) => {
    if (response.headersSent) {
      next(error);
      return;
    }
    const problem = problemFrom(error, log);
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
