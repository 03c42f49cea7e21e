import { readFile } from 'node:fs/promises';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import type { AppConfig, SamlSettings } from '../../config';
import { logger } from '../../common/logger';

/** Where the demo's fake identity provider (test/support/fake-idp) leaves its files. */
export const fakeIdpDirectory = fileURLToPath(
  new URL('../../../../.data/fake-idp/', import.meta.url),
);

/** File names in that folder: the contract between the fake IdP and this module. */
export const fakeIdpFiles = {
  privateKey: 'idp-key.pem',
  certificate: 'idp-cert.pem',
  metadata: 'idp-metadata.xml',
  manifest: 'idp.json',
} as const;

/** What the fake IdP writes about itself once it listens. */
export interface FakeIdpManifest {
  entityId: string;
  ssoUrl: string;
  spEntityId: string;
  spAcsUrl: string;
}

export const samlCallbackPath = '/api/auth/saml/callback';
export const samlMetadataPath = '/api/auth/saml/metadata';

/**
 * Time limits of the checks. The skew allows for clocks a few seconds apart; an assertion older
 * than five minutes is refused whatever its NotOnOrAfter says; a sign-in left at the IdP for ten
 * minutes must start again.
 */
export const samlTimeLimits = {
  acceptedClockSkewMs: 5_000,
  maxAssertionAgeMs: 5 * 60_000,
  requestIdExpirationPeriodMs: 10 * 60_000,
} as const;

/** Every PEM certificate in a file: two during an IdP's key rollover. */
export function certificatesIn(pem: string): string[] {
  return pem.match(/-----BEGIN CERTIFICATE-----[\s\S]+?-----END CERTIFICATE-----/g) ?? [];
}

function absoluteUrl(name: string, value: string): string {
  try {
    return new URL(value).href;
  } catch {
    throw new Error(`${name} must be an absolute URL`);
  }
}

async function fakeIdpManifest(directory: string): Promise<FakeIdpManifest | null> {
  try {
    const manifest = JSON.parse(
      await readFile(join(directory, fakeIdpFiles.manifest), 'utf8'),
    ) as Partial<FakeIdpManifest>;
    const { entityId, ssoUrl, spEntityId, spAcsUrl } = manifest;
    if (!entityId || !ssoUrl || !spEntityId || !spAcsUrl) return null;
    return { entityId, ssoUrl, spEntityId, spAcsUrl };
  } catch {
    return null;
  }
}

/**
 * Single sign-on settings. A hospital IdP is configured by SAML_ENTRY_POINT, SAML_IDP_ISSUER and
 * SAML_IDP_CERT_FILE together (a partial set fails the start rather than quietly disabling SSO);
 * SAML_SP_ENTITY_ID names us (default: our metadata URL). Without them, outside production, the
 * fake IdP's files wire the demo to it. Otherwise null: SSO answers 404 and the client hides it.
 */
export async function samlSettingsFromEnvironment(
  config: AppConfig,
  env: NodeJS.ProcessEnv = process.env,
  fakeDirectory: string = fakeIdpDirectory,
): Promise<SamlSettings | null> {
  const publicUrl = config.publicUrl.replace(/\/+$/, '');
  const callbackUrl = `${publicUrl}${samlCallbackPath}`;
  const named = {
    SAML_ENTRY_POINT: env.SAML_ENTRY_POINT,
    SAML_IDP_ISSUER: env.SAML_IDP_ISSUER,
    SAML_IDP_CERT_FILE: env.SAML_IDP_CERT_FILE,
  };
  const missing = Object.entries(named)
    .filter(([, value]) => !value)
    .map(([name]) => name);

  if (missing.length < Object.keys(named).length) {
    if (missing.length) throw new Error(`SAML is half configured: set ${missing.join(', ')} too`);
    const certificates = certificatesIn(await readFile(named.SAML_IDP_CERT_FILE as string, 'utf8'));
    if (!certificates.length) throw new Error('SAML_IDP_CERT_FILE holds no PEM certificate');
    return {
      entryPoint: absoluteUrl('SAML_ENTRY_POINT', named.SAML_ENTRY_POINT as string),
      idpIssuer: named.SAML_IDP_ISSUER as string,
      idpCert: certificates,
      spEntityId: env.SAML_SP_ENTITY_ID || `${publicUrl}${samlMetadataPath}`,
      callbackUrl,
      ...samlTimeLimits,
    };
  }

  // The fake signs anybody in: never let leftover demo files open a production server.
  if (env.NODE_ENV === 'production') return null;
  const manifest = await fakeIdpManifest(fakeDirectory);
  if (!manifest) return null;
  const certificates = certificatesIn(
    await readFile(join(fakeDirectory, fakeIdpFiles.certificate), 'utf8').catch(() => ''),
  );
  if (!certificates.length) return null;
  if (manifest.spAcsUrl !== callbackUrl) {
    logger.warn('the fake identity provider answers another ACS URL; restart it with SP_ACS_URL');
  }
  logger.info('single sign-on goes to the local fake identity provider (demo only)');
  return {
    entryPoint: manifest.ssoUrl,
    idpIssuer: manifest.entityId,
    idpCert: certificates,
    spEntityId: env.SAML_SP_ENTITY_ID || manifest.spEntityId,
    callbackUrl,
    ...samlTimeLimits,
  };
}
