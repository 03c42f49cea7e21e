/** The fake hospital identity provider of the demo and the tests (see fake-idp.ts). */
export { startFakeIdp, defaultFakeIdpEntityId } from './fake-idp';
export type { AuthnRequestInfo, FakeIdp, FakeIdpOptions } from './fake-idp';
export { demoStaff } from './demo-staff';
export type { DemoStaffMember } from './demo-staff';
export { attributeNames } from './login-response';
export type { BuiltLoginResponse, LoginResponseRequest, ResponseFault } from './login-response';
