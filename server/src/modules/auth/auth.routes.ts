import { Router } from 'express';
import type { MikroORM } from '@mikro-orm/postgresql';
import { loginRequestSchema, totpConfirmSchema } from '@emberline/shared';
import type { AppConfig } from '../../config';
import { actorOf, signedInUser } from '../../common/auth-middleware';
import { ConflictError, UnauthenticatedError, ValidationError } from '../../common/errors';
import { issueCsrfToken } from '../../common/csrf';
import { parse } from '../../common/validate';
import { recordAudit, writeAudit } from '../audit/audit.service';
import { verifyPassword } from '../users/password';
import { newTotpSecret, totpCodeStep, totpUri, useTotpCode } from '../users/totp';
import { User } from '../users/user.entity';
import { loadSignedInUser, toCurrentUser } from '../users/user.service';
import type { BoardRoom } from '../board-session/board-room';
import { destroySession, establishSession, sessionCookieName } from './session';
import { SignInLimits, sendLimited } from './sign-in-limits';

const refusal = 'The e-mail address or password is not correct.';

export function authRoutes(orm: MikroORM, config: AppConfig, room: BoardRoom): Router {
  const router = Router();

  const limits = new SignInLimits(config.loginRateLimit);

  router.post('/login', async (request, response) => {
    const body = parse(loginRequestSchema, request.body);
    const em = orm.em;
    const attempt = { address: request.ip ?? '', account: body.email };
    if (await sendLimited(response, () => limits.check(em, attempt))) return;
    const user = await em.findOne(
      User,
      { email: body.email.toLowerCase() },
      { populate: ['passwordHash', 'totpSecret'] },
    );
    const isPasswordRight = await verifyPassword(user?.passwordHash ?? null, body.password);
    const actor = { id: user?.id ?? null, email: body.email.toLowerCase(), ip: request.ip ?? null };
    if (!user || !user.isActive || !isPasswordRight) {
      await writeAudit(em, actor, {
        action: 'auth.sign-in-failed',
        outcome: 'refused',
        detail: { reason: 'credentials' },
      });
      await limits.fail(em, attempt);
      throw new UnauthenticatedError(refusal);
    }
    if (user.totpEnabledAt && user.totpSecret) {
      if (!body.code) {
        throw new UnauthenticatedError(
          'Enter the six-digit code from your authenticator app.',
          'urn:emberline:problem:totp-required',
        );
      }
      // A code works once: a code seen on the wire or reused is refused like a wrong one.
      if (!(await useTotpCode(em, user.id, user.totpSecret, body.code))) {
        await writeAudit(em, actor, {
          action: 'auth.sign-in-failed',
          outcome: 'refused',
          detail: { reason: 'totp' },
        });
        await limits.fail(em, attempt);
        throw new UnauthenticatedError(
          'The code is not correct, or it was used already: enter the next code your app shows.',
          'urn:emberline:problem:totp-required',
        );
      }
    }
    await establishSession(request, response, config, user.id, 'local');
    user.lastSignInAt = new Date();
    recordAudit(em, actor, {
      action: 'auth.sign-in',
      entityType: 'user',
      entityId: user.id,
      detail: { method: 'local' },
    });
    await em.flush();
    const current = await loadSignedInUser(em, user.id, 'local');
    response.json(current && toCurrentUser(current));
  });

  router.post('/logout', async (request, response) => {
    if (request.currentUser) {
      await writeAudit(orm.em, actorOf(request), {
        action: 'auth.sign-out',
        entityType: 'user',
        entityId: request.currentUser.id,
      });
    }
    // The browser session's live sockets close with it, at once.
    if (request.sessionID) room.disconnectHttpSession(request.sessionID);
    if (request.session) await destroySession(request);
    response.clearCookie(sessionCookieName, { path: '/' });
    delete request.currentUser;
    issueCsrfToken(config.sessionSecret, request, response, config.isCookieSecure);
    response.status(204).end();
  });

  router.get('/me', (request, response) => {
    response.json(toCurrentUser(signedInUser(request)));
  });

  router.post('/totp/setup', async (request, response) => {
    const user = signedInUser(request);
    if (user.signInMethod !== 'local') {
      throw new ConflictError(
        "Single sign-on accounts use the hospital identity provider's second factor.",
      );
    }
    if (user.hasTotp) throw new ConflictError('A second factor is set up already.');
    const secret = newTotpSecret();
    request.session.pendingTotpSecret = secret;
    response.json({ secret, otpauthUri: totpUri(secret, user.email) });
  });

  router.post('/totp/confirm', async (request, response) => {
    const current = signedInUser(request);
    const { code } = parse(totpConfirmSchema, request.body);
    const secret = request.session.pendingTotpSecret;
    if (!secret) throw new ConflictError('Start the set-up first.');
    const step = totpCodeStep(secret, code);
    if (step === null) {
      throw new ValidationError('code: the code does not match; check the clock of the device', [
        { path: 'code', message: 'does not match' },
      ]);
    }
    const user = await orm.em.findOneOrFail(User, current.id);
    user.totpSecret = secret;
    user.totpEnabledAt = new Date();
    // The code that confirmed the enrolment is used: it cannot also sign in.
    user.totpLastStep = step;
    delete request.session.pendingTotpSecret;
    recordAudit(orm.em, actorOf(request), {
      action: 'auth.totp-enabled',
      entityType: 'user',
      entityId: user.id,
    });
    await orm.em.flush();
    const refreshed = await loadSignedInUser(orm.em, user.id, current.signInMethod);
    response.json(refreshed && toCurrentUser(refreshed));
  });

  return router;
}
