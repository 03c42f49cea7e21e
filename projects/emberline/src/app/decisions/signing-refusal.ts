import type { AbstractControl } from '@angular/forms';
import type { z } from 'zod';
import { problemOf, problemMessage } from '../core/problem';
import { applyFieldErrors } from '../core/server-field-errors';
import { zodIssueText } from '../core/zod-validator';

/** The server's answer when a single sign-on account signs on a sign-on older than allowed. */
export const freshSsoProblemType = 'urn:emberline:problem:fresh-sso-required';
/** The server's answer when a local account's password is missing or wrong. */
export const passwordProblemType = 'urn:emberline:problem:password-required';

/** What a signing form shows after a refusal. */
export interface SigningRefusal {
  /** The sentence beside the form. */
  message: string;
  /** The signer must pass the hospital's identity provider again before signing. */
  needsFreshSso: boolean;
  /** The case changed meanwhile (409): what the section shows must be read again. */
  isStale: boolean;
}

/**
 * Reads a refused signature (RFC 9457 problem) into what the form shows: a wrong or missing
 * password goes on the password field (emptied), field errors on their fields, anything else
 * beside the form in the server's words. What was typed otherwise stays.
 */
export function signingRefusal(form: AbstractControl, error: unknown): SigningRefusal {
  const problem = problemOf(error);
  const detail = problemMessage(error);
  if (problem?.type === freshSsoProblemType) {
    return {
      message:
        'Signing needs a recent hospital sign-on. Sign in with hospital SSO again, come back to ' +
        'this case and sign within five minutes; what you typed here is kept on this device.',
      needsFreshSso: true,
      isStale: false,
    };
  }
  if (problem?.type === passwordProblemType) {
    const password = form.get('password');
    if (password) {
      password.reset('');
      password.setErrors({ server: detail });
      password.markAsTouched();
    }
    return { message: `Nothing was signed. ${detail}`, needsFreshSso: false, isStale: false };
  }
  const unmatched = applyFieldErrors(form, error);
  return {
    message: ['Nothing was signed.', detail, ...unmatched].join(' '),
    needsFreshSso: false,
    isStale: problem?.status === 409,
  };
}

/**
 * Checks a request body against the shared schema the server parses it with, and puts each
 * issue on the control its path names (`{ rule: '<sentence>' }`, shown by `fieldError`), so
 * that a rule across fields (an ablation names its plan) reads the same in the browser as on
 * the server. True when the body passes.
 */
export function passesSchema(form: AbstractControl, schema: z.ZodType, body: unknown): boolean {
  const result = schema.safeParse(body);
  if (result.success) return true;
  for (const issue of result.error.issues) {
    const control = form.get(issue.path.map(String).join('.'));
    if (control && control !== form) {
      control.setErrors({ ...control.errors, rule: zodIssueText(issue) });
      control.markAsTouched();
    }
  }
  form.markAllAsTouched();
  return false;
}
