import type { EntityManager } from '@mikro-orm/postgresql';
import { AppError } from '../../common/errors';
import type { Actor, SignedInUser } from '../../common/request-context';
import { AuditEvent } from '../audit/audit-event.entity';
import { writeAudit } from '../audit/audit.service';
import { verifyPassword } from '../users/password';
import { User } from '../users/user.entity';

/** How recent a single sign-on must be to sign: the identity provider vouched for the signer. */
export const freshSsoWindowMs = 5 * 60_000;

/** The client sends the signer through the identity provider again, then retries. */
export const freshSsoProblemType = 'urn:emberline:problem:fresh-sso-required';

/** The client asks for the password (again) and retries. */
export const passwordProblemType = 'urn:emberline:problem:password-required';

/**
 * Refused signatures counted per signer, like refused sign-ins: the signing routes would
 * otherwise let a session that is left open guess its owner's password without the sign-in
 * limiter's brake. Same window and count as the sign-in default (10 in 15 minutes).
 */
const refusalWindowMs = 15 * 60_000;
const refusalLimit = 10;

export class SignatureRefusedError extends AppError {
  constructor(message: string, type: string) {
    super(401, 'Signature not confirmed', message, type);
  }
}

export class TooManySignatureAttemptsError extends AppError {
  constructor() {
    super(
      429,
      'Too many attempts',
      'Too many refused signatures. Wait a few minutes, then try again.',
      'urn:emberline:problem:rate-limited',
    );
  }
}

export interface SignerCredentials {
  /** The password typed again (local accounts). */
  password: string | undefined;
  /** When the session's sign-in happened, ms since the epoch (from the session store). */
  signedInAt: number | undefined;
}

/**
 * A signature is the signer's own act, not merely their open session's: a local account types
 * its password again; a single sign-on account must have passed the identity provider within
 * the last five minutes (Emberline holds no password for it). A refusal is audited as
 * `decision.sign-refused`, like a refused sign-in, and answered 401 with a problem `type` that
 * tells the client what to ask for. Answers the method that confirmed the signer.
 */
export async function confirmSigner(
  em: EntityManager,
  user: SignedInUser,
  actor: Actor,
  credentials: SignerCredentials,
  what: { action: 'sign' | 'amend'; caseId: string },
): Promise<'local' | 'saml'> {
  const refuse = async (reason: string, error: AppError): Promise<never> => {
    await writeAudit(em, actor, {
      action: 'decision.sign-refused',
      entityType: 'case',
      entityId: what.caseId,
      outcome: 'refused',
      detail: { reason, method: user.signInMethod, for: what.action },
    });
    throw error;
  };

  if (user.signInMethod === 'saml') {
    const age =
      credentials.signedInAt === undefined ? Infinity : Date.now() - credentials.signedInAt;
    if (!(age <= freshSsoWindowMs)) {
      return refuse(
        'sso-not-fresh',
        new SignatureRefusedError(
          'Signing needs a fresh hospital sign-on: sign in through single sign-on again, then sign within five minutes.',
          freshSsoProblemType,
        ),
      );
    }
    return 'saml';
  }

  const recentRefusals = await em.fork().count(AuditEvent, {
    action: 'decision.sign-refused',
    actorId: user.id,
    at: { $gte: new Date(Date.now() - refusalWindowMs) },
  });
  if (recentRefusals >= refusalLimit) throw new TooManySignatureAttemptsError();
  if (!credentials.password) {
    return refuse(
      'missing-password',
      new SignatureRefusedError('Enter your password to sign.', passwordProblemType),
    );
  }
  const account = await em
    .fork()
    .findOne(User, { id: user.id, isActive: true }, { populate: ['passwordHash'] });
  const isRight = await verifyPassword(account?.passwordHash ?? null, credentials.password);
  if (!isRight) {
    return refuse(
      'credentials',
      new SignatureRefusedError(
        'The password is not correct; nothing was signed.',
        passwordProblemType,
      ),
    );
  }
  return 'local';
}
