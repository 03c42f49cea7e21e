import { randomBytes } from 'node:crypto';
import { mkdir, rename, writeFile } from 'node:fs/promises';
import type { AddressInfo } from 'node:net';
import { join } from 'node:path';
import express, { type Response } from 'express';
import { fakeIdpFiles, type FakeIdpManifest } from '../../../server/src/modules/saml/saml-settings';
import { demoStaff, type DemoStaffMember } from './demo-staff';
import {
  buildLoginResponse,
  type BuiltLoginResponse,
  type LoginResponseRequest,
  type ResponseParties,
} from './login-response';
import { autoSubmitScriptHash, chooserPage, handOverPage, problemPage } from './sign-in-page';
import { samlify } from './samlify-library';
import { ensureSigningIdentity } from './signing-identity';

const redirectBinding = 'urn:oasis:names:tc:SAML:2.0:bindings:HTTP-Redirect';
const postBinding = 'urn:oasis:names:tc:SAML:2.0:bindings:HTTP-POST';
/** An entity ID is a name, not an address (SAML 2.0 Core §8.3.6); `.test` never resolves. */
export const defaultFakeIdpEntityId = 'https://sso.north-hospital.test/saml/idp';
const pendingLifetimeMs = 10 * 60_000;

export interface FakeIdpOptions {
  /** 0 picks a free port (tests). */
  port: number;
  /** The SP's Assertion Consumer Service; the only place responses are handed to. */
  spAcsUrl: string;
  spEntityId: string;
  /** Where the key pair, metadata and manifest live, e.g. `.data/fake-idp/`. */
  dataDir: string;
  entityId?: string;
}

/** What an AuthnRequest asked for, once read and checked against the configured SP. */
export interface AuthnRequestInfo {
  id: string;
  issuer: string;
  acsUrl: string;
  relayState: string;
}

export interface FakeIdp {
  /** e.g. http://127.0.0.1:4301 */
  readonly url: string;
  readonly entityId: string;
  /** SingleSignOnService, HTTP-Redirect binding. */
  readonly ssoUrl: string;
  readonly certificate: string;
  readonly certFile: string;
  readonly staff: readonly DemoStaffMember[];
  /** Reads the AuthnRequest in an SP's redirect to `ssoUrl` (SAML 2.0 Bindings §3.4.4). */
  readAuthnRequest(redirectUrl: string): Promise<AuthnRequestInfo>;
  /** A signed response, message and assertion, optionally with one deliberate fault. */
  buildResponse(request: LoginResponseRequest): Promise<BuiltLoginResponse>;
  close(): Promise<void>;
}

async function writeAtomically(path: string, contents: string): Promise<void> {
  const temporary = `${path}.${process.pid}.tmp`;
  await writeFile(temporary, contents);
  await rename(temporary, path);
}

function firstString(value: unknown): string | undefined {
  if (typeof value === 'string') return value;
  if (Array.isArray(value) && typeof value[0] === 'string') return value[0];
  return undefined;
}

function sendPage(response: Response, status: number, html: string, formAction: string): void {
  response
    .status(status)
    .set({
      'Content-Type': 'text/html; charset=utf-8',
      'Cache-Control': 'no-store',
      'Content-Security-Policy':
        `default-src 'none'; style-src 'unsafe-inline'; script-src '${autoSubmitScriptHash}'; ` +
        `form-action ${formAction}; frame-ancestors 'none'; base-uri 'none'`,
      'X-Content-Type-Options': 'nosniff',
    })
    .send(html);
}

/**
 * Our stand-in hospital identity provider: an HTTP server on 127.0.0.1 with a sign-in page, and
 * a programmatic side for tests that need responses no honest IdP would send.
 */
export async function startFakeIdp(options: FakeIdpOptions): Promise<FakeIdp> {
  const entityId = options.entityId ?? defaultFakeIdpEntityId;
  const signing = await ensureSigningIdentity(options.dataDir);
  const app = express();
  app.disable('x-powered-by');
  const server = app.listen(options.port, '127.0.0.1');
  await new Promise<void>((resolve, reject) => {
    server.once('listening', resolve);
    server.once('error', reject);
  });
  const { port } = server.address() as AddressInfo;
  const url = `http://127.0.0.1:${port}`;
  const ssoUrl = `${url}/sso`;

  const idp = samlify.IdentityProvider({
    entityID: entityId,
    privateKey: signing.privateKey,
    signingCert: signing.certificate,
    singleSignOnService: [{ Binding: redirectBinding, Location: ssoUrl }],
    nameIDFormat: ['urn:oasis:names:tc:SAML:2.0:nameid-format:persistent'],
  });
  const spSettings = {
    entityID: options.spEntityId,
    assertionConsumerService: [{ Binding: postBinding, Location: options.spAcsUrl }],
    wantMessageSigned: true,
  };
  const parties: ResponseParties = {
    idp,
    sp: samlify.ServiceProvider({ ...spSettings, wantAssertionsSigned: true }),
    spWithoutAssertionSignature: samlify.ServiceProvider({
      ...spSettings,
      wantAssertionsSigned: false,
    }),
    idpEntityId: entityId,
    spEntityId: options.spEntityId,
    spAcsUrl: options.spAcsUrl,
  };

  async function readAuthnRequest(redirectUrl: string): Promise<AuthnRequestInfo> {
    const parsed = new URL(redirectUrl);
    if (`${parsed.origin}${parsed.pathname}` !== ssoUrl) {
      throw new Error('fake IdP: the redirect does not go to this identity provider');
    }
    const result = await idp.parseLoginRequest(parties.sp, 'redirect', {
      query: Object.fromEntries(parsed.searchParams),
    });
    const id = firstString(result.extract.request?.id);
    const issuer = firstString(result.extract.issuer);
    const acsUrl =
      firstString(result.extract.request?.assertionConsumerServiceUrl) ?? options.spAcsUrl;
    if (!id) throw new Error('fake IdP: the AuthnRequest has no ID');
    // SAML 2.0 Profiles §4.1.4.1: answer only the SP we know, and only at its registered ACS.
    if (issuer !== options.spEntityId)
      throw new Error('fake IdP: the AuthnRequest comes from an unknown SP');
    if (acsUrl !== options.spAcsUrl)
      throw new Error('fake IdP: the AuthnRequest names an unknown ACS URL');
    return { id, issuer, acsUrl, relayState: parsed.searchParams.get('RelayState') ?? '' };
  }

  /** Sign-ins shown a chooser, by an unguessable token: the page posts the token, not the ID. */
  const pending = new Map<string, AuthnRequestInfo & { expiresAtMs: number }>();

  app.get('/sso', async (request, response) => {
    let info: AuthnRequestInfo;
    try {
      info = await readAuthnRequest(new URL(request.originalUrl, url).href);
    } catch {
      sendPage(response, 400, problemPage('The sign-in request could not be read.'), "'none'");
      return;
    }
    const now = Date.now();
    for (const [token, entry] of pending) if (entry.expiresAtMs < now) pending.delete(token);
    const token = randomBytes(18).toString('base64url');
    pending.set(token, { ...info, expiresAtMs: now + pendingLifetimeMs });
    const html = chooserPage({
      action: `${url}/sso/sign-in`,
      requestToken: token,
      staff: demoStaff,
    });
    sendPage(response, 200, html, "'self'");
  });

  app.post(
    '/sso/sign-in',
    express.urlencoded({ extended: false, limit: '8kb' }),
    async (request, response) => {
      const body = request.body as Record<string, unknown>;
      const entry = typeof body.request === 'string' ? pending.get(body.request) : undefined;
      const staff = demoStaff.find((person) => person.key === body.staff);
      if (!entry || entry.expiresAtMs < Date.now()) {
        sendPage(
          response,
          400,
          problemPage('This sign-in has expired or was used already.'),
          "'none'",
        );
        return;
      }
      if (!staff) {
        sendPage(response, 400, problemPage('Choose one of the people listed.'), "'none'");
        return;
      }
      pending.delete(body.request as string);
      const built = await buildLoginResponse(parties, { inResponseTo: entry.id, staff });
      const html = handOverPage({
        acsUrl: entry.acsUrl,
        samlResponse: built.samlResponse,
        relayState: entry.relayState,
      });
      sendPage(response, 200, html, new URL(entry.acsUrl).origin);
    },
  );

  app.get('/metadata', (_request, response) => {
    response.type('application/samlmetadata+xml').send(idp.getMetadata());
  });

  app.get('/health', (_request, response) => {
    response.json({ status: 'ok', entityId, ssoUrl });
  });

  // The server reads these at start to wire its single sign-on to this fake (saml-settings.ts).
  await mkdir(options.dataDir, { recursive: true });
  await writeAtomically(join(options.dataDir, fakeIdpFiles.metadata), idp.getMetadata());
  const manifest: FakeIdpManifest = {
    entityId,
    ssoUrl,
    spEntityId: options.spEntityId,
    spAcsUrl: options.spAcsUrl,
  };
  await writeAtomically(
    join(options.dataDir, fakeIdpFiles.manifest),
    JSON.stringify(manifest, null, 2),
  );

  return {
    url,
    entityId,
    ssoUrl,
    certificate: signing.certificate,
    certFile: signing.certFile,
    staff: demoStaff,
    readAuthnRequest,
    buildResponse: (request) => buildLoginResponse(parties, request),
    close: () =>
      new Promise<void>((resolve, reject) => {
        server.closeAllConnections();
        server.close((error) => (error ? reject(error) : resolve()));
      }),
  };
}
