import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import { UniqueConstraintViolationException } from '@mikro-orm/core';
import { logger } from '../../server/src/common/logger';
import { User } from '../../server/src/modules/users/user.entity';
import { resetToDemo } from '../support/demo';
import { startTestApp, type TestApp } from '../support/test-app';

let testApp: TestApp;

beforeAll(async () => {
  testApp = await startTestApp();
  await resetToDemo(testApp.orm);
});

afterAll(async () => {
  await testApp.close();
});

/** The JSON line the logger writes for `error`, captured from stderr. */
function loggedLine(error: unknown): { text: string; line: Record<string, unknown> } {
  const written: string[] = [];
  const spy = vi.spyOn(process.stderr, 'write').mockImplementation((chunk) => {
    written.push(String(chunk));
    return true;
  });
  try {
    logger.error('unexpected error', error);
  } finally {
    spy.mockRestore();
  }
  expect(written).toHaveLength(1);
  return { text: written[0], line: JSON.parse(written[0]) as Record<string, unknown> };
}

async function failureOf(run: () => Promise<unknown>): Promise<unknown> {
  try {
    await run();
  } catch (error) {
    return error;
  }
  throw new Error('expected the statement to fail');
}

describe('database errors in the logs', () => {
  it('logs a failed cast by its SQLSTATE, never the value PostgreSQL quotes', async () => {
    const error = await failureOf(() =>
      testApp.orm.em.fork().execute('select cast(? as integer)', ['Maria Example 1951']),
    );
    // The server's own message quotes the value: the reason for the rule.
    expect(String((error as Error).message)).toContain('Maria Example 1951');
    const { text, line } = loggedLine(error);
    expect(text).not.toContain('Maria Example');
    // 22P02 invalid_text_representation (PostgreSQL manual, appendix A "Error codes").
    expect(line.error).toMatchObject({ code: '22P02' });
  });

  it('logs a duplicate key by code, constraint and table, without the key or the statement', async () => {
    const em = testApp.orm.em.fork();
    const error = await failureOf(() =>
      em.persistAndFlush(new User('member@emberline.test', 'Duplicate')),
    );
    expect(error).toBeInstanceOf(UniqueConstraintViolationException);
    // The ORM's message carries the statement and PostgreSQL's detail the key's value.
    expect(String((error as Error).message)).toContain('member@emberline.test');
    const { text, line } = loggedLine(error);
    expect(text).not.toContain('member@emberline');
    expect(text).not.toContain('insert into');
    // 23505 unique_violation (PostgreSQL manual, appendix A).
    expect(line.error).toMatchObject({ code: '23505', table: 'app_user' });
    expect((line.error as { constraint?: string }).constraint).toMatch(/email/);
    expect((line.error as { stack?: string }).stack).toMatch(/^ {4}at /);
  });

  it('keeps the message of an error that is not the database', () => {
    const { line } = loggedLine(new RangeError('the grid is empty'));
    expect(line.error).toMatchObject({ name: 'RangeError', message: 'the grid is empty' });
  });
});
