import { z } from 'zod';
import { NotFoundError, ValidationError } from './errors';

/** Parses with a shared zod schema; a failure becomes a 400 that names each field. */
export function parse<S extends z.ZodType>(schema: S, value: unknown): z.output<S> {
  const result = schema.safeParse(value);
  if (result.success) return result.data;
  const errors = result.error.issues.map((issue) => ({
    path: issue.path.map(String).join('.') || '(body)',
    message: issue.message,
  }));
  const first = errors[0];
  throw new ValidationError(
    first ? `${first.path}: ${first.message}` : 'The request is not valid.',
    errors,
  );
}

const uuidSchema = z.uuid();

/** A record id from the path; a malformed one names nothing: the same 404 as a record out of reach. */
export function pathId(value: unknown, what: string): string {
  const result = uuidSchema.safeParse(value);
  if (!result.success) throw new NotFoundError(what);
  return result.data;
}
