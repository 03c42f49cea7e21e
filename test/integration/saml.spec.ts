import { mkdtemp, rm } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, beforeEach, describe, expect, inject, it, vi } from 'vitest';
import type { MikroORM } from '@mikro-orm/postgresql';
import { configFromEnvironment } from '../../server/src/config';
import { openDatabase } from '../../server/src/db';
import { AuditEvent } from '../../server/src/modules/audit/audit-event.entity';
import { PostgresSamlRequestCache } from '../../server/src/modules/saml/saml-cache';
import { SamlRequest } from '../../server/src/modules/saml/saml-request.entity';
import { samlSettingsFromEnvironment } from '../../server/src/modules/saml/saml-settings';
import { User } from '../../server/src/modules/users/user.entity';
import { demoStaff, startFakeIdp, type FakeIdp, type ResponseFault } from '../support/fake-idp';
import { ApiClient, startTestApp, truncateAll, type TestApp } from '../support/test-app';

/** startTestApp's own address (PORT 4399), hence our entity ID and ACS URL. */
const publicUrl = 'http://127.0.0.1:4399';
const spEntityId = `${publicUrl}/api/auth/saml/metadata`;
const acsUrl = `${publicUrl}/api/auth/saml/callback`;
const [alex, sam, rina] = demoStaff;

let directory: string;
let idp: FakeIdp;
/** Same entity ID, its own key: a key we do not trust. */
let impostor: FakeIdp;
let testApp: TestApp;
let samlSettings: TestApp['config']['saml'];

beforeAll(async () => {
  directory = await mkdtemp(join(tmpdir(), 'emberline-saml-'));
  const common = { port: 0, spAcsUrl: acsUrl, spEntityId };
  idp = await startFakeIdp({ ...common, dataDir: join(directory, 'idp') });
  impostor = await startFakeIdp({ ...common, dataDir: join(directory, 'impostor') });
  // Through the same settings code as production, from the environment variables.
  const settings = await samlSettingsFromEnvironment(
    configFromEnvironment({ PORT: '4399' }),
    {
      SAML_ENTRY_POINT: idp.ssoUrl,
      SAML_IDP_ISSUER: idp.entityId,
      SAML_IDP_CERT_FILE: idp.certFile,
      SAML_SP_ENTITY_ID: spEntityId,
    },
    join(directory, 'no-fake-here'),
  );
  samlSettings = settings;
  testApp = await startTestApp({ saml: settings });
});

afterAll(async () => {
  await testApp?.close();
  await idp?.close();
  await impostor?.close();
  if (directory) await rm(directory, { recursive: true, force: true });
});

beforeEach(async () => {
  await truncateAll(testApp.orm);
});

/** GET /login, then the AuthnRequest ID read from the redirect, as the IdP reads it. */
async function startSignIn(client: ApiClient): Promise<string> {
  const response = await client.get('/api/auth/saml/login');
  expect(response.status).toBe(302);
  return (await idp.readAuthnRequest(response.headers.location)).id;
}

/** What the IdP's hand-over page does: a plain form post, no CSRF header. */
function postToAcs(client: ApiClient, samlResponse: string, accept?: string) {
  const call = client.agent.post('/api/auth/saml/callback').set('Host', '127.0.0.1').type('form');
  if (accept) call.set('Accept', accept);
  return call.send({ SAMLResponse: samlResponse });
}

async function auditReasons(): Promise<unknown[]> {
  const events = await testApp.orm.em.fork().find(AuditEvent, { action: 'auth.saml-refused' });
  return events.map((event) => event.detail.reason);
}

/** Refused: sent back to sign-in, no session, one audit row with the reason. */
async function expectRefused(
  client: ApiClient,
  response: { status: number; headers: Record<string, string> },
  reason: string,
): Promise<void> {
  expect(response.status).toBe(303);
  expect(response.headers.location).toBe('/sign-in?sso=refused');
  expect((await client.get('/api/auth/me')).status).toBe(401);
  expect(await auditReasons()).toEqual([reason]);
}

async function signInWithFault(fault: ResponseFault) {
  const client = new ApiClient(testApp.app);
  const inResponseTo = await startSignIn(client);
  const { samlResponse } = await idp.buildResponse({ inResponseTo, staff: alex, fault });
  return { client, response: await postToAcs(client, samlResponse) };
}

describe('SAML 2.0 Web Browser SSO (SAML 2.0 Profiles §4.1) through the fake IdP', () => {
  it('signs a new person in and provisions an account with no role', async () => {
    const client = new ApiClient(testApp.app);
    const inResponseTo = await startSignIn(client);
    const { samlResponse } = await idp.buildResponse({ inResponseTo, staff: alex });

    const response = await postToAcs(client, samlResponse);

    expect(response.status).toBe(303);
    expect(response.headers.location).toBe('/');
    const me = await client.get('/api/auth/me');
    expect(me.status).toBe(200);
    expect(me.body).toMatchObject({
      email: alex.email,
      displayName: alex.displayName,
      roles: [],
      signInMethod: 'saml',
    });
    const user = await testApp.orm.em.fork().findOneOrFail(User, { email: alex.email });
    expect(user.samlIssuer).toBe(idp.entityId);
    expect(user.samlNameId).toBe(alex.nameId);
    expect(user.lastSignInAt).not.toBeNull();
    const events = await testApp.orm.em.fork().find(AuditEvent, {}, { orderBy: { at: 'asc' } });
    expect(events.map((event) => [event.action, event.entityId, event.detail])).toEqual([
      ['user.create', user.id, { via: 'saml' }],
      ['auth.sign-in', user.id, { method: 'saml' }],
    ]);
  });

  it("signs in through the fake IdP's own sign-in page and hand-over form", async () => {
    const client = new ApiClient(testApp.app);
    const start = await client.get('/api/auth/saml/login');
    const chooser = await fetch(start.headers.location);
    const chooserHtml = await chooser.text();
    expect(chooser.status).toBe(200);
    expect(chooserHtml).toContain(`<label for="person-${sam.key}">`);
    const token = /name="request" value="([^"]+)"/.exec(chooserHtml)?.[1] ?? '';

    const handOver = await fetch(`${idp.url}/sso/sign-in`, {
      method: 'POST',
      body: new URLSearchParams({ request: token, staff: sam.key }),
    });
    const handOverHtml = await handOver.text();
    expect(handOverHtml).toContain(`action="${acsUrl}"`);
    const samlResponse = /name="SAMLResponse" value="([^"]+)"/.exec(handOverHtml)?.[1] ?? '';

    const response = await postToAcs(client, samlResponse);
    expect(response.status).toBe(303);
    expect((await client.get('/api/auth/me')).body).toMatchObject({ email: sam.email, roles: [] });
  });

  it('recognises a returning person by issuer and NameID', async () => {
    for (let visit = 0; visit < 2; visit += 1) {
      const client = new ApiClient(testApp.app);
      const inResponseTo = await startSignIn(client);
      const { samlResponse } = await idp.buildResponse({ inResponseTo, staff: rina });
      expect((await postToAcs(client, samlResponse)).status).toBe(303);
    }
    expect(await testApp.orm.em.fork().count(User, { samlNameId: rina.nameId })).toBe(1);
  });

  it('links an existing account with the same e-mail and keeps its roles', async () => {
    const em = testApp.orm.em.fork();
    const existing = new User(sam.email, 'Sam Okoro');
    existing.roles = ['board-member'];
    await em.persist(existing).flush();
    const client = new ApiClient(testApp.app);
    const inResponseTo = await startSignIn(client);
    const { samlResponse } = await idp.buildResponse({ inResponseTo, staff: sam });

    const response = await postToAcs(client, samlResponse);

    expect(response.headers.location).toBe('/cases');
    expect((await client.get('/api/auth/me')).body).toMatchObject({
      id: existing.id,
      roles: ['board-member'],
    });
    expect((await testApp.orm.em.fork().findOneOrFail(User, existing.id)).samlNameId).toBe(
      sam.nameId,
    );
  });

  it('refuses an e-mail whose account is linked to another SAML identity', async () => {
    const em = testApp.orm.em.fork();
    const existing = new User(alex.email, 'Alex Morgan');
    existing.samlIssuer = idp.entityId;
    existing.samlNameId = 'nh-someone-who-left';
    await em.persist(existing).flush();
    const client = new ApiClient(testApp.app);
    const inResponseTo = await startSignIn(client);
    const { samlResponse } = await idp.buildResponse({ inResponseTo, staff: alex });

    await expectRefused(client, await postToAcs(client, samlResponse), 'account-conflict');
  });

  it('refuses a deactivated account', async () => {
    const em = testApp.orm.em.fork();
    const existing = new User(alex.email, 'Alex Morgan');
    existing.isActive = false;
    await em.persist(existing).flush();
    const client = new ApiClient(testApp.app);
    const inResponseTo = await startSignIn(client);
    const { samlResponse } = await idp.buildResponse({ inResponseTo, staff: alex });

    await expectRefused(client, await postToAcs(client, samlResponse), 'account-inactive');
  });

  it('refuses a response changed after signing (XML Signature Core §3.2.1 reference validation)', async () => {
    const { client, response } = await signInWithFault('tampered-signature');
    await expectRefused(client, response, 'signature');
  });

  it('refuses an unsigned assertion in a signed message (SAML 2.0 Metadata §2.4.4 WantAssertionsSigned)', async () => {
    const { client, response } = await signInWithFault('unsigned-assertion');
    await expectRefused(client, response, 'signature');
  });

  it('refuses a response signed with a key we do not trust (SAML 2.0 Profiles §4.1.3.5)', async () => {
    const client = new ApiClient(testApp.app);
    const inResponseTo = await startSignIn(client);
    const { samlResponse } = await impostor.buildResponse({ inResponseTo, staff: alex });
    await expectRefused(client, await postToAcs(client, samlResponse), 'signature');
  });

  it('refuses an assertion for another service provider (SAML 2.0 Core §2.5.1.4 audience restriction)', async () => {
    const { client, response } = await signInWithFault('wrong-audience');
    await expectRefused(client, response, 'audience');
  });

  it('refuses an assertion of another issuer, logging the reason only (SAML 2.0 Profiles §4.1.4.2)', async () => {
    const lines: string[] = [];
    const stderr = vi
      .spyOn(process.stderr, 'write')
      .mockImplementation((chunk: string | Uint8Array) => {
        lines.push(String(chunk));
        return true;
      });
    let outcome: Awaited<ReturnType<typeof signInWithFault>>;
    try {
      outcome = await signInWithFault('wrong-issuer');
    } finally {
      stderr.mockRestore();
    }
    await expectRefused(outcome.client, outcome.response, 'issuer');
    const warnings = lines.map((line) => JSON.parse(line) as { level: string; message: string });
    expect(warnings).toContainEqual(
      expect.objectContaining({ level: 'warn', message: 'SAML response refused: issuer' }),
    );
    // Nothing of the assertion reaches the log (OWASP ASVS 5.0 V16.2: no sensitive data in logs).
    expect(lines.join('')).not.toContain(alex.email);
    expect(lines.join('')).not.toContain(alex.nameId);
  });

  it('refuses an expired assertion (SAML 2.0 Core §2.5.1.2 NotOnOrAfter, maximum assertion age)', async () => {
    const { client, response } = await signInWithFault('expired');
    await expectRefused(client, response, 'validity-period');
  });

  it('refuses a replayed response: its request is spent (SAML 2.0 Profiles §4.1.4.5)', async () => {
    const first = new ApiClient(testApp.app);
    const inResponseTo = await startSignIn(first);
    const { samlResponse } = await idp.buildResponse({ inResponseTo, staff: alex });
    expect((await postToAcs(first, samlResponse)).status).toBe(303);
    expect((await first.get('/api/auth/me')).status).toBe(200);

    const attacker = new ApiClient(testApp.app);
    await expectRefused(attacker, await postToAcs(attacker, samlResponse), 'unknown-request');
  });

  it('refuses an assertion ID seen before, even answering a fresh request (SAML 2.0 Profiles §4.1.4.5)', async () => {
    const first = new ApiClient(testApp.app);
    const original = await idp.buildResponse({
      inResponseTo: await startSignIn(first),
      staff: alex,
    });
    expect((await postToAcs(first, original.samlResponse)).status).toBe(303);

    const second = new ApiClient(testApp.app);
    const { samlResponse } = await idp.buildResponse({
      inResponseTo: await startSignIn(second),
      staff: alex,
      assertionId: original.assertionId,
    });
    await expectRefused(second, await postToAcs(second, samlResponse), 'replay');
  });

  it('accepts a response only once when two copies arrive at the same time', async () => {
    const clients = [new ApiClient(testApp.app), new ApiClient(testApp.app)];
    const inResponseTo = await startSignIn(clients[0]);
    const { samlResponse } = await idp.buildResponse({ inResponseTo, staff: alex });

    const responses = await Promise.all(clients.map((client) => postToAcs(client, samlResponse)));

    expect(responses.map((response) => response.headers.location).sort()).toEqual([
      '/',
      '/sign-in?sso=refused',
    ]);
    const sessions = await Promise.all(clients.map((client) => client.get('/api/auth/me')));
    expect(sessions.map((me) => me.status).sort()).toEqual([200, 401]);
  });

  it('refuses a response to a request we never made (SAML 2.0 Core §3.2.2 InResponseTo)', async () => {
    const client = new ApiClient(testApp.app);
    const { samlResponse } = await idp.buildResponse({
      inResponseTo: '_not-one-of-ours',
      staff: alex,
    });
    await expectRefused(client, await postToAcs(client, samlResponse), 'unknown-request');
  });

  it("refuses an answer to another browser's request: no login CSRF (OWASP SAML cheat sheet)", async () => {
    // The attacker starts a sign-in in their own browser and has the IdP answer it...
    const attacker = new ApiClient(testApp.app);
    const inResponseTo = await startSignIn(attacker);
    const { samlResponse } = await idp.buildResponse({ inResponseTo, staff: alex });
    // ...then makes the victim's browser post that answer.
    const victim = new ApiClient(testApp.app);
    await expectRefused(victim, await postToAcs(victim, samlResponse), 'other-browser');
    expect(await testApp.orm.em.fork().count(User, { email: alex.email })).toBe(0);
  });

  it('refuses a browser cookie naming the request with a forged signature', async () => {
    const attacker = new ApiClient(testApp.app);
    const inResponseTo = await startSignIn(attacker);
    const { samlResponse } = await idp.buildResponse({ inResponseTo, staff: alex });
    const victim = new ApiClient(testApp.app);
    const response = await victim.agent
      .post('/api/auth/saml/callback')
      .set('Host', '127.0.0.1')
      .set('Cookie', `em_saml_requests=${inResponseTo}~${'A'.repeat(43)}`)
      .type('form')
      .send({ SAMLResponse: samlResponse });
    await expectRefused(victim, response, 'other-browser');
  });

  it('keeps a few sign-ins of one browser under way at once (several tabs)', async () => {
    const client = new ApiClient(testApp.app);
    const first = await startSignIn(client);
    await startSignIn(client);
    const { samlResponse } = await idp.buildResponse({ inResponseTo: first, staff: alex });
    expect((await postToAcs(client, samlResponse)).status).toBe(303);
    expect((await client.get('/api/auth/me')).status).toBe(200);
  });

  it('refuses what is not XML with a refusal, not a server error', async () => {
    const client = new ApiClient(testApp.app);
    await startSignIn(client);
    const garbage = Buffer.from('SAMLResponse? no, just text').toString('base64');
    await expectRefused(client, await postToAcs(client, garbage), 'malformed');
  });

  it('refuses a message without InResponseTo: no IdP-initiated sign-in (SAML 2.0 Profiles §4.1.5)', async () => {
    const client = new ApiClient(testApp.app);
    await startSignIn(client);
    const notAnAnswer = Buffer.from('<html>not an answer to anything</html>').toString('base64');
    await expectRefused(client, await postToAcs(client, notAnAnswer), 'unsolicited');
  });

  it('refuses a post without a SAMLResponse field', async () => {
    const client = new ApiClient(testApp.app);
    const response = await client.agent
      .post('/api/auth/saml/callback')
      .set('Host', '127.0.0.1')
      .type('form')
      .send({ RelayState: 'x' });
    await expectRefused(client, response, 'malformed');
  });

  it('answers a refusal as problem details when JSON is asked for (RFC 9457)', async () => {
    const client = new ApiClient(testApp.app);
    const inResponseTo = await startSignIn(client);
    const { samlResponse } = await idp.buildResponse({
      inResponseTo,
      staff: alex,
      fault: 'tampered-signature',
    });

    const response = await postToAcs(client, samlResponse, 'application/json');

    expect(response.status).toBe(401);
    expect(response.headers['content-type']).toContain('application/problem+json');
    expect(response.body).toEqual({
      type: 'urn:emberline:problem:sso-refused',
      title: 'Single sign-on refused',
      status: 401,
      detail: expect.any(String),
    });
    expect(JSON.stringify(response.body)).not.toMatch(/signature|digest/i);
  });

  it('says single sign-on is enabled and publishes SP metadata (SAML 2.0 Metadata §2.4.4)', async () => {
    const client = new ApiClient(testApp.app);
    expect((await client.get('/api/auth/saml/status')).body).toEqual({ enabled: true });
    const metadata = await client.get('/api/auth/saml/metadata');
    expect(metadata.headers['content-type']).toContain('application/samlmetadata+xml');
    expect(metadata.text).toContain(`entityID="${spEntityId}"`);
    expect(metadata.text).toContain(`Location="${acsUrl}"`);
    expect(metadata.text).toContain('WantAssertionsSigned="true"');
  });
});

describe('SAML request IDs shared by several server processes', () => {
  let processes: MikroORM[];

  beforeAll(async () => {
    processes = [
      await openDatabase(inject('databaseUrl')),
      await openDatabase(inject('databaseUrl')),
    ];
  });

  afterAll(async () => {
    await Promise.all(processes.map((orm) => orm.close()));
  });

  it('finds in one process a request saved by another, and spends it for both', async () => {
    const [first, second] = processes.map((orm) => new PostgresSamlRequestCache(orm, 60_000));
    const saved = await first.saveAsync('_request-a', '2026-01-01T00:00:00.000Z');

    expect(saved?.value).toBe('2026-01-01T00:00:00.000Z');
    expect(await second.getAsync('_request-a')).toBe('2026-01-01T00:00:00.000Z');
    expect(await second.removeAsync('_request-a')).toBe('_request-a');
    expect(await first.getAsync('_request-a')).toBeNull();
    expect(await first.removeAsync('_request-a')).toBeNull();
  });

  it('refuses to save an ID twice', async () => {
    const cache = new PostgresSamlRequestCache(processes[0], 60_000);
    expect(await cache.saveAsync('_request-b', 'one')).not.toBeNull();
    expect(await cache.saveAsync('_request-b', 'two')).toBeNull();
    expect(await cache.getAsync('_request-b')).toBe('one');
  });

  it('forgets requests older than requestIdExpirationPeriodMs, and prunes them', async () => {
    const cache = new PostgresSamlRequestCache(processes[0], 60_000);
    const em = processes[0].em.fork();
    await em.insert(SamlRequest, {
      requestId: '_request-old',
      value: 'old',
      createdAt: new Date(Date.now() - 61_000),
    });
    expect(await cache.getAsync('_request-old')).toBeNull();
    await cache.saveAsync('_request-new', 'new');
    expect(await em.count(SamlRequest, { requestId: '_request-old' })).toBe(0);
  });
});

describe('SAML 2.0 single sign-on when not configured', () => {
  let plainApp: TestApp;

  beforeAll(async () => {
    plainApp = await startTestApp({ saml: null });
  });

  afterAll(async () => {
    await plainApp.close();
  });

  it('says so, and has no sign-in route', async () => {
    const client = new ApiClient(plainApp.app);
    expect((await client.get('/api/auth/saml/status')).body).toEqual({ enabled: false });
    expect((await client.get('/api/auth/saml/login')).status).toBe(404);
  });
});

describe('the SAML callback under the sign-in limits', () => {
  it('counts refused responses per address and answers 429 past the limit', async () => {
    const limited = await startTestApp({
      saml: samlSettings,
      trustProxy: 1,
      loginRateLimit: { windowMs: 60_000, limit: 3, accountLimit: 1000, addressLimit: 1000 },
    });
    try {
      const client = new ApiClient(limited.app);
      const postFrom = (address: string) =>
        client.agent
          .post('/api/auth/saml/callback')
          .set('Host', '127.0.0.1')
          .set('X-Forwarded-For', address)
          .set('Accept', 'application/json')
          .type('form')
          .send({ SAMLResponse: Buffer.from('<not-saml/>').toString('base64') });
      // Addresses from TEST-NET-2 (RFC 5737), unique to this run.
      const tag = Math.floor(Math.random() * 250) + 1;
      const statuses: number[] = [];
      for (let n = 0; n < 4; n += 1) statuses.push((await postFrom(`198.51.100.${tag}`)).status);
      expect(statuses).toEqual([401, 401, 401, 429]);
      // Refusals from one address hold back no one else.
      expect((await postFrom(`198.51.100.${(tag % 250) + 1}`)).status).toBe(401);
    } finally {
      await limited.close();
    }
  });
});
