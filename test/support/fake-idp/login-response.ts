import { randomUUID } from 'node:crypto';
import type { IdentityProviderInstance, ServiceProviderInstance } from 'samlify';
import type { DemoStaffMember } from './demo-staff';
import { samlify } from './samlify-library';

/**
 * Ways a response can be wrong, each one a check the service provider owes:
 * - `tampered-signature`: a value changed after signing (XML Signature Core §3.2 reference
 *   validation fails);
 * - `unsigned-assertion`: only the message is signed (the SP asks for signed assertions,
 *   SAML 2.0 Metadata §2.4.4 WantAssertionsSigned);
 * - `wrong-audience`: the assertion names another SP (SAML 2.0 Core §2.5.1.4);
 * - `wrong-issuer`: another IdP's name, though signed with our key (SAML 2.0 Profiles §4.1.4.2);
 * - `expired`: issued long ago, NotOnOrAfter passed (SAML 2.0 Core §2.5.1.2, §2.4.1.2).
 * A replay needs no fault: post the same response twice, or pass an earlier `assertionId`.
 */
export type ResponseFault =
  'tampered-signature' | 'unsigned-assertion' | 'wrong-audience' | 'wrong-issuer' | 'expired';

export interface LoginResponseRequest {
  /** ID of the AuthnRequest answered (SAML 2.0 Core §3.2.2 InResponseTo). */
  inResponseTo: string;
  staff: DemoStaffMember;
  fault?: ResponseFault;
  /** Re-use an earlier assertion's ID, to play a replay (SAML 2.0 Profiles §4.1.4.5). */
  assertionId?: string;
}

export interface BuiltLoginResponse {
  /** Base64 `<samlp:Response>`, the SAMLResponse form field of the HTTP-POST binding. */
  samlResponse: string;
  responseId: string;
  assertionId: string;
}

/** The parties a response is built between. */
export interface ResponseParties {
  idp: IdentityProviderInstance;
  /** The SP as we sign for it: message and assertion. */
  sp: ServiceProviderInstance;
  /** The same SP, but wanting only the message signed: for the unsigned-assertion fault. */
  spWithoutAssertionSignature: ServiceProviderInstance;
  idpEntityId: string;
  spEntityId: string;
  spAcsUrl: string;
}

const minuteMs = 60_000;
/** How long a fresh assertion is good for: long enough for a slow browser, short for a replay. */
const assertionLifetimeMs = 5 * minuteMs;
const persistentFormat = 'urn:oasis:names:tc:SAML:2.0:nameid-format:persistent';
const uriNameFormat = 'urn:oasis:names:tc:SAML:2.0:attrname-format:uri';
/** Attribute names of the X.500/LDAP attribute profile (SAML 2.0 Profiles §8.2): mail, displayName. */
export const attributeNames = {
  mail: 'urn:oid:0.9.2342.19200300.100.1.3',
  displayName: 'urn:oid:2.16.840.1.113730.3.1.241',
} as const;

function escapeXml(value: string): string {
  return value.replace(/[<>&'"]/g, (character) => `&#${character.charCodeAt(0)};`);
}

/**
 * samlify's tag replacement escapes every value, so statements made of elements are spliced in
 * as raw XML before it runs; their values are escaped here.
 */
function statements(staff: DemoStaffMember, authnInstant: string, sessionIndex: string): string {
  const attribute = (name: string, friendlyName: string, value: string) =>
    `<saml:Attribute Name="${name}" NameFormat="${uriNameFormat}" FriendlyName="${friendlyName}">` +
    `<saml:AttributeValue xsi:type="xs:string">${escapeXml(value)}</saml:AttributeValue>` +
    `</saml:Attribute>`;
  return (
    `<saml:AuthnStatement AuthnInstant="${authnInstant}" SessionIndex="${sessionIndex}">` +
    '<saml:AuthnContext><saml:AuthnContextClassRef>' +
    'urn:oasis:names:tc:SAML:2.0:ac:classes:PasswordProtectedTransport' +
    '</saml:AuthnContextClassRef></saml:AuthnContext></saml:AuthnStatement>' +
    '<saml:AttributeStatement>' +
    attribute(attributeNames.mail, 'mail', staff.email) +
    attribute(attributeNames.displayName, 'displayName', staff.displayName) +
    '</saml:AttributeStatement>'
  );
}

/** A signed `<samlp:Response>` for one AuthnRequest, with at most one deliberate fault. */
export async function buildLoginResponse(
  parties: ResponseParties,
  request: LoginResponseRequest,
): Promise<BuiltLoginResponse> {
  const { fault, staff } = request;
  const nowMs = Date.now();
  // Expired: issued a quarter of an hour ago and out of date for ten minutes.
  const issuedMs = fault === 'expired' ? nowMs - 15 * minuteMs : nowMs;
  const issueInstant = new Date(issuedMs).toISOString();
  const notOnOrAfter = new Date(issuedMs + assertionLifetimeMs).toISOString();
  const responseId = `_${randomUUID()}`;
  const assertionId = request.assertionId ?? `_${randomUUID()}`;
  const issuer =
    fault === 'wrong-issuer' ? 'https://sso.elsewhere-clinic.test/saml/idp' : parties.idpEntityId;
  const audience =
    fault === 'wrong-audience'
      ? 'https://records.elsewhere-clinic.test/saml/sp'
      : parties.spEntityId;
  const sp = fault === 'unsigned-assertion' ? parties.spWithoutAssertionSignature : parties.sp;

  const built = await parties.idp.createLoginResponse(
    sp,
    { extract: { request: { id: request.inResponseTo } } },
    'post',
    { email: staff.email },
    {
      customTagReplacement: (template) => {
        const withStatements = template
          .replace('{AuthnStatement}', statements(staff, issueInstant, `_${randomUUID()}`))
          .replace('{AttributeStatement}', '');
        const context = samlify.SamlLib.replaceTagsByValue(withStatements, {
          ID: responseId,
          AssertionID: assertionId,
          Destination: parties.spAcsUrl,
          Audience: audience,
          SubjectRecipient: parties.spAcsUrl,
          Issuer: issuer,
          IssueInstant: issueInstant,
          StatusCode: 'urn:oasis:names:tc:SAML:2.0:status:Success',
          ConditionsNotBefore: issueInstant,
          ConditionsNotOnOrAfter: notOnOrAfter,
          SubjectConfirmationDataNotOnOrAfter: notOnOrAfter,
          NameIDFormat: persistentFormat,
          NameID: staff.nameId,
          InResponseTo: request.inResponseTo,
        });
        return { id: responseId, context };
      },
    },
  );
  let samlResponse = built.context;
  if (fault === 'tampered-signature') samlResponse = tamper(samlResponse, staff.nameId);
  return { samlResponse, responseId, assertionId };
}

/** After signing, claim to be someone else: exactly what the signatures exist to catch. */
function tamper(samlResponse: string, nameId: string): string {
  const xml = Buffer.from(samlResponse, 'base64').toString('utf8');
  const original = `>${escapeXml(nameId)}</saml:NameID>`;
  if (!xml.includes(original)) throw new Error('fake IdP: the NameID to tamper with is missing');
  const tampered = xml.replace(original, '>nh-00000000-admin</saml:NameID>');
  return Buffer.from(tampered, 'utf8').toString('base64');
}
