import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import request from 'supertest';
import type { CurrentUser, ProblemDetails } from '@emberline/shared';
import { AuditEvent } from '../../server/src/modules/audit/audit-event.entity';
import { HttpSession } from '../../server/src/modules/sessions/http-session.entity';
import { currentTotpCode } from '../../server/src/modules/users/totp';
import { User } from '../../server/src/modules/users/user.entity';
import { ApiClient, startTestApp, type TestApp } from '../support/test-app';
import { demoPassword, resetToDemo } from '../support/demo';

let testApp: TestApp;

function sessionCookie(client: ApiClient): string | undefined {
  return client.agent.jar.getCookie('emberline.sid', {
    domain: '127.0.0.1',
    path: '/',
    secure: false,
    script: false,
  })?.value;
}

const sleep = (ms: number) => new Promise((resolve) => setTimeout(resolve, ms));

beforeAll(async () => {
  testApp = await startTestApp();
});
afterAll(async () => {
  await testApp.close();
});
beforeEach(async () => {
  await resetToDemo(testApp.orm);
});

describe('local sign-in', () => {
  it('answers the user with roles and boards', async () => {
    const client = new ApiClient(testApp.app);
    const response = await client.signIn('Proceduralist@Emberline.test', demoPassword);
    expect(response.status).toBe(200);
    const user = response.body as CurrentUser;
    expect(user.roles).toEqual(['proceduralist']);
    expect(user.boards.map((b) => b.boardName)).toEqual(['North Liver Board']);
    expect((await client.get('/api/auth/me')).body).toEqual(user);
  });

  it('refuses a wrong password with 401, says nothing of which part was wrong, and audits it', async () => {
    const client = new ApiClient(testApp.app);
    const wrong = await client.signIn('member@emberline.test', 'not-the-password');
    const unknown = await client.signIn('nobody@emberline.test', 'not-the-password');
    expect(wrong.status).toBe(401);
    expect((wrong.body as ProblemDetails).detail).toBe((unknown.body as ProblemDetails).detail);
    const failures = await testApp.orm.em
      .fork()
      .find(AuditEvent, { action: 'auth.sign-in-failed' });
    expect(failures.map((f) => f.actorEmail).sort()).toEqual([
      'member@emberline.test',
      'nobody@emberline.test',
    ]);
  });

  it('stores passwords as argon2id hashes only', async () => {
    const user = await testApp.orm.em
      .fork()
      .findOneOrFail(User, { email: 'member@emberline.test' }, { populate: ['passwordHash'] });
    expect(user.passwordHash).toMatch(/^\$argon2id\$v=19\$m=19456,t=2,p=1\$/);
  });

  it('refuses an administrator-set password shorter than 12 characters (OWASP ASVS 5.0 §6.2)', async () => {
    const admin = new ApiClient(testApp.app);
    await admin.signIn('admin@emberline.test', demoPassword);
    const response = await admin.post('/api/admin/users', {
      email: 'short@emberline.test',
      displayName: 'Short Pass',
      roles: [],
      password: 'elevenchars',
    });
    expect(response.status).toBe(400);
    expect((response.body as ProblemDetails).errors?.[0]?.path).toBe('password');
  });
});

describe('sessions', () => {
  it('issues a new session id at every sign-in and forgets the old one', async () => {
    const client = new ApiClient(testApp.app);
    await client.signIn('member@emberline.test', demoPassword);
    const first = sessionCookie(client);
    await client.signIn('member@emberline.test', demoPassword);
    const second = sessionCookie(client);
    expect(first).toBeTruthy();
    expect(second).not.toBe(first);
    const replay = await request(testApp.app)
      .get('/api/auth/me')
      .set('Cookie', `emberline.sid=${first}`);
    expect(replay.status).toBe(401);
  });

  it('sets the session cookie HttpOnly and SameSite=Lax', async () => {
    const client = new ApiClient(testApp.app);
    const response = await client.signIn('member@emberline.test', demoPassword);
    const cookies = ([] as string[]).concat(response.headers['set-cookie'] ?? []);
    const sessionLine = cookies.find((line) => line.startsWith('emberline.sid='));
    expect(sessionLine).toMatch(/HttpOnly/i);
    expect(sessionLine).toMatch(/SameSite=Lax/i);
  });

  it('destroys the session on the server at sign-out', async () => {
    const client = new ApiClient(testApp.app);
    await client.signIn('member@emberline.test', demoPassword);
    const sid = sessionCookie(client);
    expect(await testApp.orm.em.fork().count(HttpSession, {})).toBe(1);
    expect((await client.post('/api/auth/logout')).status).toBe(204);
    expect(await testApp.orm.em.fork().count(HttpSession, {})).toBe(0);
    const replay = await request(testApp.app)
      .get('/api/auth/me')
      .set('Cookie', `emberline.sid=${sid}`);
    expect(replay.status).toBe(401);
  });

  it('ends a session after the idle timeout', async () => {
    const idleApp = await startTestApp({ sessionIdleTimeoutMs: 1000 });
    try {
      const client = new ApiClient(idleApp.app);
      await client.signIn('member@emberline.test', demoPassword);
      expect((await client.get('/api/auth/me')).status).toBe(200);
      await sleep(1300);
      expect((await client.get('/api/auth/me')).status).toBe(401);
    } finally {
      await idleApp.close();
    }
  });

  it('ends a busy session at its absolute lifetime', async () => {
    const shortApp = await startTestApp({ sessionAbsoluteLifetimeMs: 1200 });
    try {
      const client = new ApiClient(shortApp.app);
      await client.signIn('member@emberline.test', demoPassword);
      for (let n = 0; n < 3; n += 1) {
        expect((await client.get('/api/auth/me')).status).toBe(200);
        await sleep(250);
      }
      await sleep(600);
      expect((await client.get('/api/auth/me')).status).toBe(401);
    } finally {
      await shortApp.close();
    }
  });
});

describe('CSRF protection (Angular XSRF-TOKEN / X-XSRF-TOKEN convention)', () => {
  it('refuses a state-changing request without the header', async () => {
    const client = new ApiClient(testApp.app);
    await client.signIn('presenter@emberline.test', demoPassword);
    const response = await client.agent.post('/api/auth/logout').set('Host', '127.0.0.1');
    expect(response.status).toBe(403);
    expect((response.body as ProblemDetails).type).toBe('urn:emberline:problem:csrf');
  });

  it('refuses a header that does not match the cookie', async () => {
    const client = new ApiClient(testApp.app);
    await client.signIn('presenter@emberline.test', demoPassword);
    const response = await client.agent
      .post('/api/auth/logout')
      .set('Host', '127.0.0.1')
      .set('X-XSRF-TOKEN', 'forged.value');
    expect(response.status).toBe(403);
  });

  it('refuses a token issued before sign-in once signed in (bound to the session)', async () => {
    const client = new ApiClient(testApp.app);
    await client.get('/api/health');
    const before = client.agent.jar.getCookie('XSRF-TOKEN', {
      domain: '127.0.0.1',
      path: '/',
      secure: false,
      script: true,
    })?.value;
    await client.signIn('presenter@emberline.test', demoPassword);
    const response = await client.agent
      .post('/api/auth/logout')
      .set('Host', '127.0.0.1')
      .set('Cookie', `XSRF-TOKEN=${before}`)
      .set('X-XSRF-TOKEN', String(before));
    expect(response.status).toBe(403);
  });
});

describe('sign-in limits (failed attempts only, counted in PostgreSQL)', () => {
  // Addresses from TEST-NET-3 (RFC 5737), unique to this run, so that other suites' sign-ins on
  // the shared test database never count here.
  const runTag = Math.floor(Math.random() * 200) + 1;
  const address = (host: number) => `203.0.113.${(runTag + host) % 250}`;
  const limitsOf = (limits: { limit?: number; accountLimit?: number; addressLimit?: number }) => ({
    trustProxy: 1,
    loginRateLimit: {
      windowMs: 60_000,
      limit: 1000,
      accountLimit: 1000,
      addressLimit: 1000,
      ...limits,
    },
  });

  it('answers 429 after too many failures for one address and account, with Retry-After', async () => {
    const limited = await startTestApp(limitsOf({ limit: 3 }));
    try {
      const client = new ApiClient(limited.app);
      const from = address(1);
      const statuses: number[] = [];
      for (let n = 0; n < 4; n += 1)
        statuses.push((await client.signInFrom(from, 'member@emberline.test', 'wrong!')).status);
      expect(statuses).toEqual([401, 401, 401, 429]);
      const refused = await client.signInFrom(from, 'member@emberline.test', demoPassword);
      expect(refused.status).toBe(429);
      expect(Number(refused.headers['retry-after'])).toBeGreaterThan(0);
      expect((refused.body as ProblemDetails).type).toBe('urn:emberline:problem:rate-limited');
      // Another account from the same address, and the same account from elsewhere, go on.
      expect((await client.signInFrom(from, 'presenter@emberline.test', demoPassword)).status).toBe(
        200,
      );
      expect(
        (await client.signInFrom(address(2), 'member@emberline.test', demoPassword)).status,
      ).toBe(200);
    } finally {
      await limited.close();
    }
  });

  it('never counts a successful sign-in', async () => {
    const limited = await startTestApp(limitsOf({ limit: 2, accountLimit: 2, addressLimit: 2 }));
    try {
      const statuses: number[] = [];
      for (let n = 0; n < 12; n += 1) {
        const client = new ApiClient(limited.app);
        statuses.push(
          (await client.signInFrom(address(3), 'coordinator@emberline.test', demoPassword)).status,
        );
      }
      expect(statuses).toEqual(Array(12).fill(200));
    } finally {
      await limited.close();
    }
  });

  it('limits one account tried from many addresses', async () => {
    const limited = await startTestApp(limitsOf({ accountLimit: 4 }));
    try {
      const client = new ApiClient(limited.app);
      const statuses: number[] = [];
      for (let n = 0; n < 5; n += 1)
        statuses.push(
          (await client.signInFrom(address(10 + n), `guess-${runTag}@emberline.test`, 'guess'))
            .status,
        );
      expect(statuses).toEqual([401, 401, 401, 401, 429]);
    } finally {
      await limited.close();
    }
  });

  it('limits one address trying one password across many accounts', async () => {
    const limited = await startTestApp(limitsOf({ addressLimit: 4 }));
    try {
      const client = new ApiClient(limited.app);
      const statuses: number[] = [];
      for (let n = 0; n < 5; n += 1)
        statuses.push(
          (await client.signInFrom(address(20), `nobody-${n}@emberline.test`, 'Spring2026!'))
            .status,
        );
      expect(statuses).toEqual([401, 401, 401, 401, 429]);
    } finally {
      await limited.close();
    }
  });

  it('counts the failures on one process against the other (one database)', async () => {
    const settings = limitsOf({ limit: 3 });
    const [first, second] = [await startTestApp(settings), await startTestApp(settings)];
    try {
      const from = address(30);
      for (const app of [first, second, first])
        expect(
          (await new ApiClient(app.app).signInFrom(from, 'admin@emberline.test', 'x')).status,
        ).toBe(401);
      expect(
        (await new ApiClient(second.app).signInFrom(from, 'admin@emberline.test', demoPassword))
          .status,
      ).toBe(429);
    } finally {
      await first.close();
      await second.close();
    }
  });
});

describe('second factor (TOTP, RFC 6238)', () => {
  async function enrol(client: ApiClient): Promise<string> {
    const setup = await client.post('/api/auth/totp/setup');
    expect(setup.status).toBe(200);
    const { secret, otpauthUri } = setup.body as { secret: string; otpauthUri: string };
    expect(otpauthUri).toMatch(/^otpauth:\/\/totp\/Emberline:/);
    const wrong = await client.post('/api/auth/totp/confirm', {
      code: '000000' === currentTotpCode(secret) ? '111111' : '000000',
    });
    expect(wrong.status).toBe(400);
    const confirmed = await client.post('/api/auth/totp/confirm', {
      code: currentTotpCode(secret),
    });
    expect(confirmed.status).toBe(200);
    expect((confirmed.body as CurrentUser).hasTotp).toBe(true);
    return secret;
  }

  it('asks for the code once enrolled, and accepts the right one', async () => {
    const client = new ApiClient(testApp.app);
    await client.signIn('member@emberline.test', demoPassword);
    const secret = await enrol(client);
    await client.post('/api/auth/logout');
    const withoutCode = await client.signIn('member@emberline.test', demoPassword);
    expect(withoutCode.status).toBe(401);
    expect((withoutCode.body as ProblemDetails).type).toBe('urn:emberline:problem:totp-required');
    const wrongCode = await client.signIn(
      'member@emberline.test',
      demoPassword,
      currentTotpCode(secret, Date.now() - 10 * 60_000),
    );
    expect(wrongCode.status).toBe(401);
    // The code that confirmed the enrolment is spent (RFC 6238 §5.2: a verifier must not accept
    // an OTP a second time); the next step's code (within the one step of drift) works, once.
    const spent = await client.signIn(
      'member@emberline.test',
      demoPassword,
      currentTotpCode(secret),
    );
    expect(spent.status).toBe(401);
    const next = currentTotpCode(secret, Date.now() + 30_000);
    expect((await client.signIn('member@emberline.test', demoPassword, next)).status).toBe(200);
    await client.post('/api/auth/logout');
    const replayed = await client.signIn('member@emberline.test', demoPassword, next);
    expect(replayed.status).toBe(401);
    expect((replayed.body as ProblemDetails).detail).toMatch(/used already/);
  });

  it('lets two requests with one code sign in once between them', async () => {
    const client = new ApiClient(testApp.app);
    await client.signIn('proceduralist@emberline.test', demoPassword);
    const secret = await enrol(client);
    await client.post('/api/auth/logout');
    const code = currentTotpCode(secret, Date.now() + 30_000);
    const [first, second] = [new ApiClient(testApp.app), new ApiClient(testApp.app)];
    const statuses = await Promise.all([
      first.signIn('proceduralist@emberline.test', demoPassword, code),
      second.signIn('proceduralist@emberline.test', demoPassword, code),
    ]).then((answers) => answers.map((answer) => answer.status).sort());
    expect(statuses).toEqual([200, 401]);
  });

  it('holds a role that requires a second factor to enrolment until it is set up', async () => {
    const admin = new ApiClient(testApp.app);
    await admin.signIn('admin@emberline.test', demoPassword);
    expect(
      (await admin.put('/api/admin/role-policies/board-member', { requiresTotp: true })).status,
    ).toBe(200);

    const member = new ApiClient(testApp.app);
    const signIn = await member.signIn('member@emberline.test', demoPassword);
    expect((signIn.body as CurrentUser).mustEnrolTotp).toBe(true);
    expect((await member.get('/api/cases')).status).toBe(403);
    await enrol(member);
    expect((await member.get('/api/cases')).status).toBe(200);
  });
});
