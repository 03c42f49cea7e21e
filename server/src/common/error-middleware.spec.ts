import { describe, expect, it } from 'vitest';
import type { Request, Response } from 'express';
import { NotFoundError as OrmNotFoundError } from '@mikro-orm/core';
import { ormConfig } from '../mikro-orm.config';
import { errorMiddleware } from './error-middleware';
import { NotFoundError } from './errors';

/** Runs the middleware on one error and answers the status and body it sent. */
function answer(error: unknown): { status: number; body: unknown; logged: number } {
  let status = 0;
  let body: unknown = null;
  let logged = 0;
  const response = {
    headersSent: false,
    status(code: number) {
      status = code;
      return response;
    },
    type() {
      return response;
    },
    json(value: unknown) {
      body = value;
      return response;
    },
  };
  errorMiddleware(() => logged++)(
    error,
    {} as Request,
    response as unknown as Response,
    () => undefined,
  );
  return { status, body, logged };
}

describe('error middleware', () => {
  it('answers the ORM’s own not-found error with 404 and no query text, unlogged', () => {
    const sent = answer(new OrmNotFoundError('NeedlePlan not found ({ id: "secret" })'));
    expect(sent.status).toBe(404);
    expect(JSON.stringify(sent.body)).not.toContain('secret');
    expect(sent.logged).toBe(0);
  });

  it('answers an unknown error with 500, a safe message, and logs it', () => {
    const sent = answer(new Error('password=hunter2'));
    expect(sent.status).toBe(500);
    expect(JSON.stringify(sent.body)).not.toContain('hunter2');
    expect(sent.logged).toBe(1);
  });
});

describe('findOneOrFail handler', () => {
  it('turns a miss into the product’s NotFoundError naming the record in words', () => {
    const handler = ormConfig('postgresql://unused@127.0.0.1/none').findOneOrFailHandler;
    const error = handler?.('NeedlePlan', { id: 'x' });
    expect(error).toBeInstanceOf(NotFoundError);
    expect(error?.message).toBe('The needle plan was not found.');
  });
});
