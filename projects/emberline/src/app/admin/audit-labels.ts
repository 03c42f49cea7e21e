import type { AuditAction } from '@emberline/shared';

/** What each audited action means, in a few words. */
export const auditActionLabels: Record<AuditAction, string> = {
  'auth.sign-in': 'Signed in',
  'auth.sign-in-failed': 'Sign-in refused',
  'auth.sign-out': 'Signed out',
  'auth.saml-refused': 'Hospital sign-on refused',
  'auth.totp-enabled': 'Second factor set up',
  'case.read': 'Case opened',
  'case.create': 'Case created',
  'case.update': 'Case changed',
  'case.delete': 'Case deleted',
  'lesion.create': 'Lesion added',
  'lesion.delete': 'Lesion removed',
  'lab-panel.create': 'Laboratory panel added',
  'user.create': 'Account created',
  'user.update': 'Account changed',
  'board.create': 'Board created',
  'membership.create': 'Board membership granted',
  'membership.delete': 'Board membership removed',
  'role-policy.update': 'Role policy changed',
  'series.upload': 'Image series uploaded',
  'series.list': 'Image series listed',
  'series.volume-read': 'Image volume read',
};
