import { DriverException } from '@mikro-orm/core';
import { SamlStatusError } from '@node-saml/passport-saml';

/**
 * Why a SAML response was refused: a short code for the audit trail and the log. The codes say
 * which check failed and never carry anything of the response itself.
 */
export type SamlRefusalReason =
  /** No SAMLResponse, not XML, no assertion, or a field the profile requires is absent. */
  | 'malformed'
  /** A missing, broken or untrusted XML signature on the message or the assertion. */
  | 'signature'
  /** No InResponseTo: IdP-initiated (SAML 2.0 Profiles §4.1.5); we accept answers to our requests only. */
  | 'unsolicited'
  /** InResponseTo names no request of ours that is still waiting (unknown, spent or too old). */
  | 'unknown-request'
  /** Answers a request another browser started (the request ID is not in this browser's cookie). */
  | 'other-browser'
  /** Outside NotBefore/NotOnOrAfter, or older than the maximum assertion age. */
  | 'validity-period'
  /** The audience restriction names another service provider. */
  | 'audience'
  /** Issued by another identity provider than the one configured. */
  | 'issuer'
  /** An assertion ID accepted before. */
  | 'replay'
  /** The IdP answered with a status other than Success. */
  | 'idp-status'
  /** The assertion gives no usable e-mail address to provision or link an account with. */
  | 'no-email'
  /** The account exists but is deactivated. */
  | 'account-inactive'
  /** The e-mail belongs to an account linked to another SAML identity. */
  | 'account-conflict'
  /** Any other failed check. */
  | 'invalid';

export class SamlRefusal extends Error {
  constructor(
    readonly reason: SamlRefusalReason,
    /** The account concerned, when the refusal came after the assertion was verified. */
    readonly account: { id: string; email: string } | null = null,
  ) {
    super(`SAML response refused: ${reason}`);
    this.name = 'SamlRefusal';
  }
}

/**
 * node-saml reports failed checks as plain Errors told apart only by their messages; these
 * patterns, in order, sort them into reasons. The integration tests pin every mapping, so a
 * change of wording in an upgrade shows as a failing test, not as a silently wrong audit trail.
 */
const messagePatterns: [RegExp, SamlRefusalReason][] = [
  [/xmldom|not a valid XML/i, 'malformed'],
  [/InResponseTo is missing/i, 'unsolicited'],
  [/InResponseTo/i, 'unknown-request'],
  [/signature|signed data|multiple assertions|too many transforms|ID cannot refer/i, 'signature'],
  [/expired|not yet valid|too old|subject confirmation/i, 'validity-period'],
  [/audience/i, 'audience'],
  [/issuer/i, 'issuer'],
  [
    /missing SAML assertion|unknown SAML response|EncryptedAssertion|decryption key|NoPassive/i,
    'malformed',
  ],
];

/**
 * The refusal for an error thrown while checking a response. Database failures are not the
 * sender's fault: they are thrown on, to be logged and answered 500 like any server failure.
 */
export function refusalFor(error: unknown): SamlRefusal {
  if (error instanceof SamlRefusal) return error;
  if (error instanceof DriverException) throw error;
  if (error instanceof SamlStatusError) return new SamlRefusal('idp-status');
  const message = error instanceof Error ? error.message : '';
  const match = messagePatterns.find(([pattern]) => pattern.test(message));
  return new SamlRefusal(match ? match[1] : 'invalid');
}
