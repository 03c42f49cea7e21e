import type { EntityManager, MikroORM } from '@mikro-orm/postgresql';
import { SAML, ValidateInResponseTo, type Profile } from '@node-saml/passport-saml';
import { z } from 'zod';
import type { SamlSettings } from '../../config';
import { User } from '../users/user.entity';
import { PostgresSamlRequestCache } from './saml-cache';
import { refusalFor, SamlRefusal } from './saml-refusal';
import { assertionLedgerEntry, recordAssertionOnce } from './saml-replay-guard';

/** Who the identity provider vouched for, once every check has passed. */
export interface SamlIdentity {
  issuer: string;
  nameId: string;
  email: string;
  displayName: string;
  /** The AuthnRequest this response answers (checked against our pending requests). */
  inResponseTo: string;
}

/** Attribute names of the X.500/LDAP attribute profile (SAML 2.0 Profiles §8.2). */
const displayNameAttribute = 'urn:oid:2.16.840.1.113730.3.1.241';
const persistentNameIdFormat = 'urn:oasis:names:tc:SAML:2.0:nameid-format:persistent';
const emailSchema = z.email().max(254);

function text(value: unknown): string | undefined {
  return typeof value === 'string' && value.trim() ? value.trim() : undefined;
}

/** Single sign-on as a SAML 2.0 service provider (Web Browser SSO Profile, SAML 2.0 Profiles §4.1). */
export class SamlSignIn {
  private readonly saml: SAML;

  constructor(
    private readonly orm: MikroORM,
    private readonly settings: SamlSettings,
  ) {
    this.saml = new SAML({
      entryPoint: settings.entryPoint,
      issuer: settings.spEntityId,
      callbackUrl: settings.callbackUrl,
      idpCert: settings.idpCert,
      // node-saml compares idpIssuer on logout messages only (node-saml/passport-saml#314): the
      // assertion's Issuer is compared in verify() below.
      idpIssuer: settings.idpIssuer,
      audience: settings.spEntityId,
      // Both signatures, as the library's maintainers advise: the message's covers the
      // InResponseTo and Destination, the assertion's covers who signed in.
      wantAuthnResponseSigned: true,
      wantAssertionsSigned: true,
      validateInResponseTo: ValidateInResponseTo.always,
      requestIdExpirationPeriodMs: settings.requestIdExpirationPeriodMs,
      cacheProvider: new PostgresSamlRequestCache(orm, settings.requestIdExpirationPeriodMs),
      acceptedClockSkewMs: settings.acceptedClockSkewMs,
      maxAssertionAgeMs: settings.maxAssertionAgeMs,
      // A persistent NameID (SAML 2.0 Core §8.3.7) survives a change of e-mail address.
      identifierFormat: persistentNameIdFormat,
      // The hospital decides how strongly its staff authenticate (often with a second factor);
      // asking for an exact password context would make some IdPs refuse.
      disableRequestedAuthnContext: true,
    });
  }

  /** The IdP's SSO URL with a deflated AuthnRequest (HTTP-Redirect, SAML 2.0 Bindings §3.4). */
  authorizeUrl(): Promise<string> {
    return this.saml.getAuthorizeUrlAsync('', undefined, {});
  }

  /** Our SP metadata (SAML 2.0 Metadata §2.4.4), for the hospital's IdP administrators. */
  metadata(): string {
    return this.saml.generateServiceProviderMetadata(null, null);
  }

  /**
   * Checks a posted SAMLResponse: both signatures against the configured certificate,
   * InResponseTo against our pending requests (spent on use), NotBefore/NotOnOrAfter with the
   * accepted skew, the maximum assertion age, the audience, the issuer, and that the assertion
   * ID was never accepted before. Any failure throws a SamlRefusal.
   */
  async verify(body: unknown): Promise<SamlIdentity> {
    const samlResponse =
      typeof body === 'object' && body !== null
        ? (body as { SAMLResponse?: unknown }).SAMLResponse
        : undefined;
    if (typeof samlResponse !== 'string' || !samlResponse) throw new SamlRefusal('malformed');
    let profile: Profile | null;
    try {
      ({ profile } = await this.saml.validatePostResponseAsync({ SAMLResponse: samlResponse }));
    } catch (error) {
      throw refusalFor(error);
    }
    // A null profile is a NoPassive answer or a logout response: no sign-in either way.
    if (!profile) throw new SamlRefusal('malformed');
    // SAML 2.0 Profiles §4.1.4.2: the assertion's Issuer MUST be the identity provider. A shared
    // signing key (multi-tenant IdPs) must not let one tenant sign its users in here.
    if (profile.issuer !== this.settings.idpIssuer) throw new SamlRefusal('issuer');
    const nameId = text(profile.nameID);
    if (!nameId) throw new SamlRefusal('malformed');
    const inResponseTo = text(profile.inResponseTo);
    if (!inResponseTo) throw new SamlRefusal('unsolicited');
    await recordAssertionOnce(
      this.orm,
      assertionLedgerEntry(profile.getAssertion?.(), this.settings.acceptedClockSkewMs),
    );
    const email = emailSchema.safeParse(text(profile.email));
    if (!email.success) throw new SamlRefusal('no-email');
    const address = email.data.toLowerCase();
    const displayName = (text(profile[displayNameAttribute]) ?? address.split('@')[0]).slice(
      0,
      120,
    );
    return { issuer: profile.issuer, nameId, email: address, displayName, inResponseTo };
  }

  /**
   * The account of a verified identity: linked before by issuer and NameID; else an account
   * with the same e-mail, linked now; else a new one with no role, until an administrator
   * grants one (least privilege, OWASP ASVS 5.0 V8.2). Changes are left to the caller's flush.
   */
  async accountFor(
    em: EntityManager,
    identity: SamlIdentity,
  ): Promise<{ user: User; isNew: boolean }> {
    let user = await em.findOne(User, { samlIssuer: identity.issuer, samlNameId: identity.nameId });
    let isNew = false;
    if (!user) {
      user = await em.findOne(User, { email: identity.email });
      if (user && user.samlNameId !== null) {
        // Linked to another identity: a reassigned address must not inherit the old account.
        throw new SamlRefusal('account-conflict', { id: user.id, email: user.email });
      }
      if (!user) {
        user = new User(identity.email, identity.displayName);
        em.persist(user);
        isNew = true;
      }
      user.samlIssuer = identity.issuer;
      user.samlNameId = identity.nameId;
    }
    if (!user.isActive)
      throw new SamlRefusal('account-inactive', { id: user.id, email: user.email });
    return { user, isNew };
  }
}
