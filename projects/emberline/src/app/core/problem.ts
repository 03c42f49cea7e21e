import { HttpErrorResponse } from '@angular/common/http';
import type { ProblemDetails } from '@emberline/shared';

/** Problem type of a sign-in that needs (or got a wrong) six-digit code. */
export const TOTP_REQUIRED_PROBLEM = 'urn:emberline:problem:totp-required';

/** The problem details (RFC 9457) an API error carries, or null for other failures. */
export function problemOf(error: unknown): ProblemDetails | null {
  if (!(error instanceof HttpErrorResponse)) return null;
  const body: unknown = error.error;
  if (typeof body !== 'object' || body === null) return null;
  const candidate = body as Partial<ProblemDetails>;
  if (typeof candidate.title !== 'string' || typeof candidate.status !== 'number') return null;
  return {
    type: typeof candidate.type === 'string' ? candidate.type : 'about:blank',
    title: candidate.title,
    status: candidate.status,
    detail: typeof candidate.detail === 'string' ? candidate.detail : undefined,
    errors: Array.isArray(candidate.errors) ? candidate.errors : undefined,
  };
}

/** A sentence for the user about a failed request; never a stack trace or raw body. */
export function problemMessage(error: unknown): string {
  const problem = problemOf(error);
  if (problem) return problem.detail ?? problem.title;
  if (error instanceof HttpErrorResponse) {
    if (error.status === 0)
      return 'The server cannot be reached. Check the connection and try again.';
    return `The server answered with status ${error.status}. Try again in a moment.`;
  }
  return 'Something went wrong. Try again in a moment.';
}

export function isProblemOfType(error: unknown, type: string): boolean {
  return problemOf(error)?.type === type;
}
