import { z } from 'zod';

export const auditActions = [
  'auth.sign-in',
  'auth.sign-in-failed',
  'auth.sign-out',
  'auth.saml-refused',
  'auth.totp-enabled',
  'case.read',
  'case.create',
  'case.update',
  'case.delete',
  'lesion.create',
  'lesion.delete',
  'lab-panel.create',
  'series.upload',
  'series.list',
  'series.read',
  'series.volume-read',
  'structures.import',
  'structures.list',
  'structures.label-map-read',
  'structure.update',
  'structure.lesion-link',
  'plans.list',
  'plan.read',
  'plan.create',
  'plan.update',
  'plan.delete',
  'plan.copy',
  'meeting.schedule',
  'agenda.add',
  'agenda.order',
  'agenda.move',
  'board.quorum',
  'assessment.request',
  'assessment.read',
  'applicator-profile.create',
  'applicator-profile.update',
  'safety-profile.create',
  'safety-profile.update',
  'user.create',
  'user.update',
  'board.create',
  'membership.create',
  'membership.delete',
  'role-policy.update',
] as const;
export type AuditAction = (typeof auditActions)[number];

/** What each audited action means, in a few words (one place, so a new action cannot go unlabelled). */
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
  'series.read': 'Image series opened',
  'series.volume-read': 'Image volume read',
  'structures.import': 'Structures imported',
  'structures.list': 'Structures listed',
  'structures.label-map-read': 'Label map read',
  'structure.update': 'Structure changed',
  'structure.lesion-link': 'Tumour’s lesion link confirmed or released',
  'plans.list': 'Needle plans listed',
  'plan.read': 'Needle plan opened',
  'plan.create': 'Needle plan created',
  'plan.update': 'Needle plan changed',
  'plan.delete': 'Needle plan deleted',
  'plan.copy': 'Needle plan copied as a new draft',
  'meeting.schedule': 'Board meeting scheduled',
  'agenda.add': 'Case put on a meeting agenda',
  'agenda.order': 'Meeting agenda reordered',
  'agenda.move': 'Agenda item moved to another meeting',
  'board.quorum': 'Board quorum specialties changed',
  'assessment.request': 'Plan assessment requested',
  'assessment.read': 'Plan assessment read',
  'applicator-profile.create': 'Applicator profile created',
  'applicator-profile.update': 'Applicator profile changed',
  'safety-profile.create': 'Safety profile created',
  'safety-profile.update': 'Safety profile changed',
};

export interface AuditEventView {
  id: string;
  at: string;
  actorId: string | null;
  actorEmail: string | null;
  action: AuditAction;
  entityType: string | null;
  entityId: string | null;
  ip: string | null;
  outcome: 'success' | 'refused';
  detail: Record<string, unknown>;
}

export const auditQuerySchema = z.object({
  page: z.coerce.number().int().min(0).default(0),
  size: z.coerce.number().int().min(1).max(200).default(50),
  action: z.enum(auditActions).optional(),
  actor: z.string().trim().max(254).optional(),
  entityId: z.string().trim().max(64).optional(),
  from: z.iso.datetime({ offset: true }).optional(),
  to: z.iso.datetime({ offset: true }).optional(),
});
