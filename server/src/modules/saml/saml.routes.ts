import { Router, type Request, type Response } from 'express';
import { rateLimit } from 'express-rate-limit';
import { SignInLimits, sendLimited } from '../auth/sign-in-limits';
import {
  authnRequestIdOf,
  bindToBrowser,
  isBoundToBrowser,
  releaseFromBrowser,
} from './saml-browser-binding';
import type { MikroORM } from '@mikro-orm/postgresql';
import type { ProblemDetails } from '@emberline/shared';
import type { AppConfig, SamlSettings } from '../../config';
import { logger } from '../../common/logger';
import { recordAudit, writeAudit } from '../audit/audit.service';
import { establishSession } from '../auth/session';
import { refusalFor, SamlRefusal } from './saml-refusal';
import { SamlSignIn } from './saml.service';

/** Whether the client should offer single sign-on; always mounted, SSO or not. */
export function samlStatusRoutes(config: AppConfig): Router {
  const router = Router();
  router.get('/status', (_request, response) => {
    response.json({ enabled: config.saml !== null });
  });
  return router;
}

const refusedProblem: ProblemDetails = {
  type: 'urn:emberline:problem:sso-refused',
  title: 'Single sign-on refused',
  status: 401,
  detail: 'The answer of the identity provider could not be accepted. Start the sign-in again.',
};

/** Web Browser SSO (SAML 2.0 Profiles §4.1): start, Assertion Consumer Service, SP metadata. */
export function samlRoutes(orm: MikroORM, config: AppConfig, settings: SamlSettings): Router {
  const router = Router();
  const signIn = new SamlSignIn(orm, settings);
  const limits = new SignInLimits(config.loginRateLimit);

  // Each start stores a request ID: bound it per address against automated filling
  // (OWASP ASVS 5.0 V2.4 anti-automation). Generous, since a ward may share one address.
  const startLimiter = rateLimit({
    windowMs: 60_000,
    limit: 60,
    standardHeaders: 'draft-8',
    legacyHeaders: false,
    handler: (_request, response) => {
      const problem: ProblemDetails = {
        type: 'urn:emberline:problem:rate-limited',
        title: 'Too many attempts',
        status: 429,
        detail: 'Too many sign-in attempts. Wait a minute, then try again.',
      };
      response.status(429).type('application/problem+json').json(problem);
    },
  });

  const binding = { secret: config.sessionSecret, isSecure: config.isCookieSecure };

  router.get('/login', startLimiter, async (request, response) => {
    const url = await signIn.authorizeUrl();
    bindToBrowser(request, response, {
      ...binding,
      maxAgeMs: settings.requestIdExpirationPeriodMs,
      requestId: authnRequestIdOf(url),
    });
    response.redirect(302, url);
  });

  router.get('/metadata', (_request, response) => {
    // The media type of SAML 2.0 Metadata §4.1.1.
    response.type('application/samlmetadata+xml').send(signIn.metadata());
  });

  /** Says no without saying why: the reason goes to the audit trail and the log only. */
  async function refuse(request: Request, response: Response, refusal: SamlRefusal): Promise<void> {
    const actor = {
      id: refusal.account?.id ?? null,
      email: refusal.account?.email ?? null,
      ip: request.ip ?? null,
    };
    await writeAudit(orm.em, actor, {
      action: 'auth.saml-refused',
      outcome: 'refused',
      detail: { reason: refusal.reason },
    });
    logger.warn(`SAML response refused: ${refusal.reason}`);
    if (request.accepts(['html', 'json']) === 'json') {
      response.status(401).type('application/problem+json').json(refusedProblem);
    } else {
      response.redirect(303, '/sign-in?sso=refused');
    }
  }

  // The ACS (HTTP-POST binding). Exempt from CSRF tokens by design: the IdP's page posts here
  // cross-site, and the signed, single-use response is the proof instead.
  // Refused responses count like failed passwords, per address only: the account is a name of
  // the address, so that refusals from one place never hold back single sign-on elsewhere.
  router.post('/callback', async (request, response) => {
    const em = orm.em;
    const attempt = { address: request.ip ?? '', account: `saml:${request.ip ?? ''}` };
    if (await sendLimited(response, () => limits.check(em, attempt))) return;
    let account: Awaited<ReturnType<SamlSignIn['accountFor']>>;
    try {
      const identity = await signIn.verify(request.body);
      // Verified, and so spent: this browser's cookie forgets it whatever happens next.
      releaseFromBrowser(request, response, { ...binding, requestId: identity.inResponseTo });
      if (!isBoundToBrowser(request, binding.secret, identity.inResponseTo))
        throw new SamlRefusal('other-browser');
      account = await signIn.accountFor(em, identity);
    } catch (error) {
      await limits.fail(em, attempt);
      await refuse(request, response, refusalFor(error));
      return;
    }
    const { user, isNew } = account;
    const actor = { id: user.id, email: user.email, ip: request.ip ?? null };
    if (isNew) {
      recordAudit(em, actor, {
        action: 'user.create',
        entityType: 'user',
        entityId: user.id,
        detail: { via: 'saml' },
      });
    }
    user.lastSignInAt = new Date();
    recordAudit(em, actor, {
      action: 'auth.sign-in',
      entityType: 'user',
      entityId: user.id,
      detail: { method: 'saml' },
    });
    await em.flush();
    await establishSession(request, response, config, user.id, 'saml');
    // A new account has no role yet: its home page says to ask an administrator.
    response.redirect(303, user.roles.length > 0 ? '/cases' : '/');
  });

  return router;
}
