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
  'user.create',
  'user.update',
  'board.create',
  'membership.create',
  'membership.delete',
  'role-policy.update',
] as const;
export type AuditAction = (typeof auditActions)[number];

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
